// The run map's packed form (shared/map-overview.ts): what the server packs
// must come back, station for station and line for line, in the browser.
import { describe, expect, it } from 'vitest'
import { packMap, unpackMap, type MapLineIn, type MapStationIn } from '../../shared/map-overview'

/** A small invented network in awkward places: negative and large coordinates, lines given either way round. */
function network(): { stations: MapStationIn[]; lines: MapLineIn[] } {
  const stations: MapStationIn[] = [
    { name: 'A', east: 500123.4567, north: -12.3456, kind: 1, a: null, b: null, az: null },
    { name: 'B', east: -250.0004, north: 6100000.9996, kind: 0, a: 0.01234, b: 0.00456, az: 123.45 },
    { name: 'C', east: 0, north: 0, kind: 2, a: 0.0009, b: 0.0002, az: 0 },
    { name: 'D', east: 17.5, north: 3.25, kind: 0, a: 0.5, b: 0.25, az: 179.96 },
  ]
  const lines: MapLineIn[] = [
    { from: 3, to: 0, rating: 2 },
    { from: 1, to: 2, rating: 0 },
    { from: 0, to: 1, rating: 1 },
    { from: 2, to: 3, rating: 0 },
    { from: 3, to: 1, rating: 2 },
  ]
  return { stations, lines }
}

describe('the packed run map', () => {
  it('gives back every station to the millimetre and every ellipse to 0.01 mm and 0.1°', () => {
    const { stations, lines } = network()
    const packed = JSON.parse(JSON.stringify(packMap(stations, lines)))
    // all integers on the wire: no long decimals in the JSON
    for (const v of [...packed.xy, ...packed.ellipse, ...packed.pairs]) expect(Number.isInteger(v)).toBe(true)
    const map = unpackMap(packed)
    expect(map.names).toEqual(['A', 'B', 'C', 'D'])
    stations.forEach((s, i) => {
      expect(Math.abs(map.east[i]! - s.east)).toBeLessThanOrEqual(0.0005)
      expect(Math.abs(map.north[i]! - s.north)).toBeLessThanOrEqual(0.0005)
      expect(map.kind[i]).toBe(s.kind)
      if (s.a === null) expect(map.a[i]).toBe(0)
      else {
        expect(Math.abs(map.a[i]! - s.a)).toBeLessThanOrEqual(0.000005)
        expect(Math.abs(map.b[i]! - s.b!)).toBeLessThanOrEqual(0.000005)
        expect(Math.abs(map.az[i]! - s.az!)).toBeLessThanOrEqual(0.05)
      }
    })
  })

  it('gives back each line once, whichever way round it was given, with its rating', () => {
    const { stations, lines } = network()
    const map = unpackMap(packMap(stations, lines))
    const got = Array.from(map.from, (f, k) => `${[f, map.to[k]!].sort().join('-')}:${map.rating[k]}`).sort()
    const want = lines.map((l) => `${[l.from, l.to].sort().join('-')}:${l.rating}`).sort()
    expect(got).toEqual(want)
    // every line stored low index first
    for (let k = 0; k < map.from.length; k++) expect(map.from[k]!).toBeLessThan(map.to[k]!)
  })

  it('lists only the lines that do not pass, and line kinds only when some line is not terrestrial', () => {
    const { stations, lines } = network()
    const plain = packMap(stations, lines)
    expect(plain.watch.length).toBe(1)
    expect(plain.fail.length).toBe(2)
    expect(plain.lineKind).toBeUndefined()
    expect(Array.from(unpackMap(plain).lineKind)).toEqual([0, 0, 0, 0, 0])
    const withKind = packMap(stations, lines.map((l, k) => (k === 1 ? { ...l, kind: 1 } : l)))
    const map = unpackMap(withKind)
    const k = Array.from(map.from).findIndex((f, i) => f === 1 && map.to[i] === 2)
    expect(map.lineKind[k]).toBe(1)
    expect(Array.from(map.lineKind).filter((x) => x === 1).length).toBe(1)
  })

  it('packs an empty run', () => {
    const map = unpackMap(JSON.parse(JSON.stringify(packMap([], []))))
    expect(map.names).toEqual([])
    expect(map.from.length).toBe(0)
  })
})
