// The map of one run in a compact form: what the run page's network map
// draws, packed on the server (server/services/run-results.ts mapData) and
// unpacked into typed arrays in the browser (components/NetworkMap.client.vue).
// A 10,000-station, 30,000-line run is a few hundred KB of JSON instead of a
// megabyte of per-station objects: coordinates are integer millimetres from
// one origin, lines are index pairs sorted and stored as small differences,
// and only the lines that do not pass are listed by rating.

/** What the overview route sends (JSON). */
export interface PackedMap {
  /** metres; every coordinate below is in millimetres from this point */
  origin: [number, number]
  names: string[]
  /** east, north of each station in mm from `origin`, interleaved */
  xy: number[]
  /** per station: 0 new, 1 control held fixed, 2 control weighted or free */
  kind: number[]
  /** per station: semi-major and semi-minor axis of the absolute ellipse at the run's confidence in 0.01 mm and its azimuth in 0.1°, interleaved; 0, 0, 0 when none is drawn (held stations) */
  ellipse: number[]
  /** the connected pairs (i < j, sorted by i then j), as [i − previous i, j − i] interleaved */
  pairs: number[]
  /** indices (into the pair list) of the lines rated watch and fail; every other line passes */
  watch: number[]
  fail: number[]
  /** line kinds by index when some line is not a terrestrial one (0); absent: all terrestrial */
  lineKind?: number[]
}

/** The same, unpacked for drawing. */
export interface MapData {
  names: string[]
  /** metres */
  east: Float64Array
  north: Float64Array
  kind: Uint8Array
  /** metres and degrees; a = 0 where no ellipse is drawn */
  a: Float64Array
  b: Float64Array
  az: Float64Array
  from: Uint32Array
  to: Uint32Array
  /** 0 pass, 1 watch, 2 fail */
  rating: Uint8Array
  lineKind: Uint8Array
}

export interface MapStationIn { name: string; east: number; north: number; kind: number; a: number | null; b: number | null; az: number | null }
export interface MapLineIn { from: number; to: number; rating: number; kind?: number }

/** Packs stations and lines (station indices; either order) for the overview route. */
export function packMap(stations: MapStationIn[], lines: MapLineIn[]): PackedMap {
  let minE = Infinity
  let minN = Infinity
  for (const s of stations) { minE = Math.min(minE, s.east); minN = Math.min(minN, s.north) }
  // a whole-metre origin keeps the origin itself short and exact
  const origin: [number, number] = stations.length ? [Math.floor(minE), Math.floor(minN)] : [0, 0]
  const xy: number[] = []
  const kind: number[] = []
  const ellipse: number[] = []
  for (const s of stations) {
    xy.push(Math.round((s.east - origin[0]) * 1000), Math.round((s.north - origin[1]) * 1000))
    kind.push(s.kind)
    if (s.a === null || s.b === null || !(s.a > 0)) ellipse.push(0, 0, 0)
    else ellipse.push(Math.max(1, Math.round(s.a * 1e5)), Math.round(s.b * 1e5), Math.round((s.az ?? 0) * 10))
  }
  const sorted = lines.map((l) => (l.from <= l.to ? l : { ...l, from: l.to, to: l.from }))
    .sort((p, q) => p.from - q.from || p.to - q.to)
  const pairs: number[] = []
  const watch: number[] = []
  const fail: number[] = []
  let prev = 0
  let special = false
  sorted.forEach((l, k) => {
    pairs.push(l.from - prev, l.to - l.from)
    prev = l.from
    if (l.rating === 1) watch.push(k)
    else if (l.rating === 2) fail.push(k)
    if (l.kind) special = true
  })
  return { origin, names: stations.map((s) => s.name), xy, kind, ellipse, pairs, watch, fail, ...(special ? { lineKind: sorted.map((l) => l.kind ?? 0) } : {}) }
}

/** Unpacks the overview route's map into typed arrays. */
export function unpackMap(p: PackedMap): MapData {
  const n = p.names.length
  const east = new Float64Array(n)
  const north = new Float64Array(n)
  const a = new Float64Array(n)
  const b = new Float64Array(n)
  const az = new Float64Array(n)
  for (let i = 0; i < n; i++) {
    east[i] = p.origin[0] + p.xy[2 * i]! / 1000
    north[i] = p.origin[1] + p.xy[2 * i + 1]! / 1000
    a[i] = p.ellipse[3 * i]! / 1e5
    b[i] = p.ellipse[3 * i + 1]! / 1e5
    az[i] = p.ellipse[3 * i + 2]! / 10
  }
  const m = p.pairs.length / 2
  const from = new Uint32Array(m)
  const to = new Uint32Array(m)
  let prev = 0
  for (let k = 0; k < m; k++) {
    prev += p.pairs[2 * k]!
    from[k] = prev
    to[k] = prev + p.pairs[2 * k + 1]!
  }
  const rating = new Uint8Array(m)
  for (const k of p.watch) rating[k] = 1
  for (const k of p.fail) rating[k] = 2
  return { names: p.names, east, north, kind: Uint8Array.from(p.kind), a, b, az, from, to, rating, lineKind: p.lineKind ? Uint8Array.from(p.lineKind) : new Uint8Array(m) }
}
