// The instrument profile as the command line takes it: key=value pairs
// ("distanceMm=2,distancePpm=2,directionArcsec=3") or the path of a JSON file
// holding one object. The names are the API's own instrument-profile fields;
// the short keys (a, b, dir, zen, ci, ct, lev) are still accepted.
// Unnamed fields keep DEFAULT_PROFILE's value. Units are those of the profile:
// mm, ppm, arcseconds, mm/√km.

import { DEFAULT_PROFILE } from './sigma'
import type { InstrumentProfile } from './types'

/** short key (still accepted) → InstrumentProfile field, the name to use */
export const PROFILE_KEYS: Record<string, keyof InstrumentProfile> = {
  a: 'distanceMm',
  b: 'distancePpm',
  dir: 'directionArcsec',
  zen: 'zenithArcsec',
  ci: 'centeringInstrumentMm',
  ct: 'centeringTargetMm',
  lev: 'levellingMmPerSqrtKm',
}

const FIELDS = new Set<string>(Object.values(PROFILE_KEYS))

export type ProfileParse = { ok: true; profile: InstrumentProfile } | { ok: false; message: string }

/**
 * Parses `--profile` text. `readFile` is asked for the text when the argument
 * does not look like key=value pairs (it is then taken as a JSON file path).
 */
export function parseProfileArg(arg: string, readFile: (path: string) => string): ProfileParse {
  const text = arg.trim()
  if (!text) return { ok: false, message: `--profile: give key=value pairs (${[...FIELDS].join(', ')}) or a JSON file` }
  let entries: [string, unknown][]
  if (/^[A-Za-z]+\s*=/.test(text)) {
    entries = []
    for (const part of text.split(',')) {
      const m = /^\s*([A-Za-z]+)\s*=\s*(.*?)\s*$/.exec(part)
      if (!m) return { ok: false, message: `--profile: '${part.trim()}' is not key=value` }
      const v = m[2] === '' ? NaN : Number(m[2])
      entries.push([m[1], v])
    }
  } else {
    let raw: string
    try {
      raw = readFile(text)
    } catch (e) {
      return { ok: false, message: `--profile: cannot read ${text}: ${e instanceof Error ? e.message : String(e)}` }
    }
    let obj: unknown
    try {
      obj = JSON.parse(raw)
    } catch (e) {
      return { ok: false, message: `--profile: ${text} is not valid JSON (${e instanceof Error ? e.message : String(e)})` }
    }
    if (!obj || typeof obj !== 'object' || Array.isArray(obj)) return { ok: false, message: `--profile: ${text} must hold one JSON object` }
    entries = Object.entries(obj as Record<string, unknown>)
  }
  const profile: InstrumentProfile = { ...DEFAULT_PROFILE }
  const seen = new Set<string>()
  for (const [key, value] of entries) {
    const field = PROFILE_KEYS[key] ?? (FIELDS.has(key) ? (key as keyof InstrumentProfile) : undefined)
    if (!field) return { ok: false, message: `--profile, field ${key}: unknown (use ${[...FIELDS].join(', ')}; short keys ${Object.keys(PROFILE_KEYS).join(', ')} also work)` }
    if (seen.has(field)) return { ok: false, message: `--profile, field ${key}: given twice` }
    seen.add(field)
    if (typeof value !== 'number' || !Number.isFinite(value) || value < 0) {
      return { ok: false, message: `--profile, field ${key}: must be a non-negative number` }
    }
    profile[field] = value
  }
  // a zero σ would give an observation infinite weight
  if (profile.distanceMm === 0 && profile.distancePpm === 0 && profile.centeringInstrumentMm === 0 && profile.centeringTargetMm === 0) {
    return { ok: false, message: '--profile, field a: distance σ (a, b) and both centering errors are 0, so distances would have no σ' }
  }
  if (profile.levellingMmPerSqrtKm === 0) return { ok: false, message: '--profile, field lev: must be above 0 (levelling σ per √km)' }
  if (profile.directionArcsec === 0 && profile.centeringInstrumentMm === 0 && profile.centeringTargetMm === 0) {
    return { ok: false, message: '--profile, field dir: direction σ and both centering errors are 0, so directions would have no σ' }
  }
  return { ok: true, profile }
}
