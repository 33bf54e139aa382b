// The command line's --profile parser: short keys, full field names, JSON files,
// defaults for fields not named, and messages that name the field.
import { describe, expect, it } from 'vitest'
import { parseProfileArg } from '../../../server/engine/profile'
import { DEFAULT_PROFILE } from '../../../server/engine/sigma'

const noFile = (path: string): string => {
  throw new Error(`no such file ${path}`)
}

describe('parseProfileArg', () => {
  it('maps every short key to its profile field', () => {
    const r = parseProfileArg('a=2,b=3,dir=4,zen=5,ci=0.5,ct=1.5,lev=0.7', noFile)
    expect(r).toEqual({
      ok: true,
      profile: { distanceMm: 2, distancePpm: 3, directionArcsec: 4, zenithArcsec: 5, centeringInstrumentMm: 0.5, centeringTargetMm: 1.5, levellingMmPerSqrtKm: 0.7 },
    })
  })
  it('keeps the default for fields not named', () => {
    const r = parseProfileArg(' dir = 1 ', noFile)
    expect(r.ok && r.profile).toEqual({ ...DEFAULT_PROFILE, directionArcsec: 1 })
  })
  it('reads a JSON file (short or full names)', () => {
    const r = parseProfileArg('p.json', () => '{"a": 1, "levellingMmPerSqrtKm": 3}')
    expect(r.ok && r.profile).toEqual({ ...DEFAULT_PROFILE, distanceMm: 1, levellingMmPerSqrtKm: 3 })
  })
  it.each([
    ['a=x', /field a: must be a non-negative number/],
    ['a=', /field a: must be a non-negative number/],
    ['a=1,a=2', /field a: given twice/],
    ['a=1,foo', /'foo' is not key=value/],
    ['speed=3', /field speed: unknown/],
    ['dir=0,ci=0,ct=0', /directions would have no σ/],
    ['a=0,b=0,ci=0,ct=0', /distances would have no σ/],
    ['lev=0', /field lev: must be above 0/],
    ['missing.json', /cannot read missing.json/],
  ])('%s is refused: %s', (arg, message) => {
    const r = parseProfileArg(arg, noFile)
    expect(r.ok).toBe(false)
    if (!r.ok) expect(r.message).toMatch(message)
  })
  it('names the API field names first when a key is unknown, short keys after', () => {
    const r = parseProfileArg('speed=3', noFile)
    expect(!r.ok && r.message).toMatch(/unknown \(use distanceMm, distancePpm, directionArcsec, zenithArcsec, centeringInstrumentMm, centeringTargetMm, levellingMmPerSqrtKm; short keys a, b, dir, zen, ci, ct, lev also work\)/)
  })
  it('takes the API field names as key=value pairs', () => {
    const r = parseProfileArg('distanceMm=1.5,directionArcsec=2,levellingMmPerSqrtKm=0.7', noFile)
    expect(r.ok && r.profile).toEqual({ ...DEFAULT_PROFILE, distanceMm: 1.5, directionArcsec: 2, levellingMmPerSqrtKm: 0.7 })
  })
  it('a JSON file that is not one object is refused', () => {
    const r = parseProfileArg('p.json', () => '[1, 2]')
    expect(!r.ok && r.message).toMatch(/must hold one JSON object/)
    const s = parseProfileArg('p.json', () => '{"a": "2"}')
    expect(!s.ok && s.message).toMatch(/field a: must be a non-negative number/)
  })
})
