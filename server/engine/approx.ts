// Approximate plane coordinates and heights for the Gauss–Newton start.
//
// Repeats, until every station is placed or no rule applies any more:
// orient direction sets at placed stations from placed targets; polar points
// (ray + distance from one placed station), intersection of two rays,
// distance–distance intersection (mirror ambiguity resolved by a third
// observation when there is one), free station from a set with directions and
// distances to two placed stations, and resection from three or more directions
// (small Gauss–Newton from several starts). Traverses follow from orienting the
// set at each newly placed station on its backsight. Heights spread along height
// differences. Standard constructions of plane surveying (common practice; see
// Ghilani, C.D. & Wolf, P.R. (2015) Elementary Surveying, 14th ed., Pearson,
// ch. 10–11, from memory).

import { azimuth, wrapPi, TWO_PI } from './geometry'

export interface XY {
  e: number
  n: number
}

export interface ApproxDirection {
  at: string
  to: string
  set: number
  value: number
}
export interface ApproxAngle {
  at: string
  from: string
  to: string
  value: number
}
export interface ApproxLine {
  at: string
  to: string
  value: number
}

export interface PlaneApproxInput {
  stations: string[]
  known: Map<string, XY>
  setCount: number
  directions: ApproxDirection[]
  angles: ApproxAngle[]
  distances: ApproxLine[]
  azimuths: ApproxLine[]
  /** free network with nothing placed: seed a local frame */
  seedIfEmpty: boolean
  /** internal: no second attempt through a local frame */
  noLocalFrame?: boolean
}

export interface PlaneApproxResult {
  coords: Map<string, XY>
  orientation: Float64Array
  unplaced: string[]
}

interface Ray {
  from: XY
  fromName: string
  az: number
}

export function approximatePlane(input: PlaneApproxInput): PlaneApproxResult {
  const coords = new Map(input.known)
  const orientation = new Float64Array(input.setCount).fill(NaN)
  const setStation: string[] = []
  for (const d of input.directions) setStation[d.set] = d.at

  if (coords.size === 0 && input.seedIfEmpty) seed(input, coords, orientation)
  if (input.stations.every((st) => coords.has(st))) {
    // every station already placed (given, or fitted from a local frame): only the sets to orient
    orientSets(input, coords, orientation)
    for (let s = 0; s < input.setCount; s++) if (Number.isNaN(orientation[s])) orientation[s] = 0
    return { coords, orientation, unplaced: [] }
  }

  const neighbours = placeByRules(input, coords, orientation)
  if (!input.noLocalFrame && coords.size >= 2 && input.stations.some((s) => !coords.has(s))) {
    // stalled (e.g. no set sees a known point): build each connected piece of the
    // network that still has unplaced stations in a local frame of its own, from a
    // seed inside that piece, and fit it onto the piece's placed stations; then
    // carry on from there. (One seed for the whole network reached one piece
    // only, so a second piece with its own control stayed unplaced.)
    let fitted = false
    for (const piece of pieces(input.stations, neighbours)) {
      if (piece.every((s) => coords.has(s))) continue
      const placed = piece.filter((s) => coords.has(s))
      if (placed.length < 2) continue
      const local = approximatePlane({ ...restrictTo(input, piece), known: new Map(), seedIfEmpty: true, noLocalFrame: true })
      const common = placed.filter((s) => local.coords.has(s))
      if (common.length < 2) continue
      const t = fitRigid(common.map((s) => ({ x: local.coords.get(s)!, p: coords.get(s)! })))
      for (const [s, xy] of local.coords) if (!coords.has(s)) coords.set(s, t(xy))
      fitted = true
    }
    if (fitted) return approximatePlane({ ...input, known: coords, noLocalFrame: true })
  }
  orientSets(input, coords, orientation)
  for (let s = 0; s < input.setCount; s++) if (Number.isNaN(orientation[s])) orientation[s] = 0
  return { coords, orientation, unplaced: input.stations.filter((s) => !coords.has(s)) }
}

/**
 * The construction passes (orientation of sets, polar points, intersections,
 * free stations, resections) until nothing more can be placed. Returns the
 * station graph. Apart from approximatePlane so that neither is one large
 * function for the JIT to compile.
 */
function placeByRules(input: PlaneApproxInput, coords: Map<string, XY>, orientation: Float64Array): Map<string, string[]> {
  const byStation = indexByStation(input)
  // ---- large networks: only sets not yet oriented are looked at, and only
  // stations with a placed neighbour are tried (the result is unchanged)
  const sets = new OrientationQueue(input)
  const neighbours = new Map<string, string[]>()
  for (const [st, o] of byStation) {
    // a handful per station: a linear search dedupes without a Set per station
    const nb: string[] = []
    const add = (x: string) => {
      if (x !== st && !nb.includes(x)) nb.push(x)
    }
    for (const d of o.directions) add(d.at === st ? d.to : d.at)
    for (const g of o.angles) {
      add(g.at)
      add(g.from)
      add(g.to)
    }
    for (const d of o.distances) add(d.at === st ? d.to : d.at)
    for (const z of o.azimuths) add(z.at === st ? z.to : z.at)
    neighbours.set(st, nb)
  }
  // Stations are tried in input order, pass after pass, as before; but only the
  // frontier (unplaced stations with a placed neighbour) is visited: a station
  // placed in a pass puts its later neighbours into this pass and its earlier
  // ones into the next, exactly the stations the full scan would have found
  // reachable — so the placements are the same, at a cost per pass of the
  // frontier instead of the whole network.
  const stations = input.stations
  const n = stations.length
  const indexOf = new Map(stations.map((st, i) => [st, i]))
  const placed = new Uint8Array(n)
  const inFrontier = new Uint8Array(n)
  let placedCount = 0
  let next: number[] = []
  const neighbourIdx: Int32Array[] = stations.map((st) => Int32Array.from((neighbours.get(st) ?? []).map((nb) => indexOf.get(nb) ?? -1).filter((j) => j >= 0)))
  for (let i = 0; i < n; i++) if (coords.has(stations[i])) {
    placed[i] = 1
    placedCount++
  }
  // stations placed before the passes (known, seeded) and not in the list may still have neighbours in it
  for (const st of coords.keys()) {
    for (const nb of neighbours.get(st) ?? []) {
      const j = indexOf.get(nb)
      if (j !== undefined && !placed[j] && !inFrontier[j]) {
        inFrontier[j] = 1
        next.push(j)
      }
    }
  }
  const heap = new MinHeap()
  let allowAmbiguous = false
  for (let guard = 0; guard < 10 * n + 10; guard++) {
    let progress = sets.orient(coords, orientation)
    for (const j of next) heap.push(j)
    next = []
    while (heap.size > 0) {
      const i = heap.pop()
      if (placed[i]) continue
      const st = stations[i]
      const p = place(st, byStation.get(st) ?? EMPTY, coords, orientation, allowAmbiguous)
      if (!p) {
        next.push(i)
        continue
      }
      coords.set(st, p)
      sets.touch(st)
      placed[i] = 1
      placedCount++
      progress = true
      allowAmbiguous = false
      for (const j of neighbourIdx[i]) {
        if (placed[j] || inFrontier[j]) continue
        inFrontier[j] = 1
        if (j > i) heap.push(j)
        else next.push(j)
      }
    }
    if (placedCount === n) break
    if (!progress) {
      if (allowAmbiguous) break
      allowAmbiguous = true
    }
  }
  return neighbours
}

/** Connected pieces of the station graph (stations joined by any observation), each in input order. */
function pieces(stations: string[], neighbours: Map<string, string[]>): string[][] {
  const pieceOf = new Map<string, number>()
  const out: string[][] = []
  for (const start of stations) {
    if (pieceOf.has(start)) continue
    const k = out.length
    const queue = [start]
    pieceOf.set(start, k)
    for (let h = 0; h < queue.length; h++) {
      for (const nb of neighbours.get(queue[h]) ?? []) {
        if (!pieceOf.has(nb)) {
          pieceOf.set(nb, k)
          queue.push(nb)
        }
      }
    }
    out.push(queue)
  }
  const order = new Map(stations.map((s, i) => [s, i]))
  return out.map((p) => p.sort((a, b) => (order.get(a) ?? 0) - (order.get(b) ?? 0)))
}

/** The observations among one piece's stations (set numbers kept, so orientations line up). */
function restrictTo(input: PlaneApproxInput, piece: string[]): PlaneApproxInput {
  const inside = new Set(piece)
  return {
    ...input,
    stations: piece,
    directions: input.directions.filter((d) => inside.has(d.at)),
    angles: input.angles.filter((g) => inside.has(g.at)),
    distances: input.distances.filter((d) => inside.has(d.at)),
    azimuths: input.azimuths.filter((z) => inside.has(z.at)),
  }
}

/** Least-squares rotation (or reflection, for mirror-ambiguous distance-only frames) + translation. */
function fitRigid(pairs: { x: XY; p: XY }[]): (xy: XY) => XY {
  const candidates = ([1, -1] as const).map((mirror) => {
    const map = rigidMap(pairs, mirror)
    const err = pairs.reduce((a, q) => a + Math.hypot(map(q.x).e - q.p.e, map(q.x).n - q.p.n), 0)
    return { map, err }
  })
  return candidates[0].err <= candidates[1].err ? candidates[0].map : candidates[1].map
}

/**
 * The rotation (about the centroids) and translation that carry local points x
 * onto placed points p in least squares; `mirror` −1 reflects the local east axis first.
 * Local (e, n) rotated clockwise by th: e' = e cos + n sin, n' = −e sin + n cos.
 */
function rigidMap(pairs: { x: XY; p: XY }[], mirror: 1 | -1): (xy: XY) => XY {
  const mx = mean(pairs.map((q) => q.x))
  const mp = mean(pairs.map((q) => q.p))
  let sa = 0
  let sb = 0
  for (const q of pairs) {
    const xe = mirror * (q.x.e - mx.e)
    const xn = q.x.n - mx.n
    const pe = q.p.e - mp.e
    const pn = q.p.n - mp.n
    sa += xe * pe + xn * pn
    sb += xn * pe - xe * pn
  }
  const th = Math.atan2(sb, sa)
  const c = Math.cos(th)
  const sn = Math.sin(th)
  return (xy: XY): XY => {
    const xe = mirror * (xy.e - mx.e)
    const xn = xy.n - mx.n
    return { e: mp.e + xe * c + xn * sn, n: mp.n - xe * sn + xn * c }
  }
}

function seed(input: PlaneApproxInput, coords: Map<string, XY>, orientation: Float64Array): void {
  const count = new Map<string, number>()
  const bump = (s: string) => count.set(s, (count.get(s) ?? 0) + 1)
  for (const d of input.directions) bump(d.at)
  for (const d of input.distances) {
    bump(d.at)
    bump(d.to)
  }
  let best = input.stations[0]
  for (const s of input.stations) if ((count.get(s) ?? 0) > (count.get(best) ?? 0)) best = s
  if (best === undefined) return
  coords.set(best, { e: 0, n: 0 })
  const own = input.directions.find((d) => d.at === best)
  if (own) {
    orientation[own.set] = 0
    return
  }
  const line = input.distances.find((d) => d.at === best || d.to === best)
  if (line) coords.set(line.at === best ? line.to : line.at, { e: 0, n: line.value })
}

/**
 * orientSets for the sets still unoriented only, and of those only the ones
 * with a direction to or from a station placed since they were last looked at
 * (the others cannot have changed): same result, without rereading every
 * direction each pass.
 */
class OrientationQueue {
  private readonly bySet = new Map<number, ApproxDirection[]>()
  private readonly setsOf = new Map<string, number[]>()
  private dirty = new Set<number>()
  constructor(input: PlaneApproxInput) {
    for (const d of input.directions) {
      const l = this.bySet.get(d.set)
      if (l) l.push(d)
      else this.bySet.set(d.set, [d])
      this.note(d.at, d.set)
      this.note(d.to, d.set)
    }
    this.dirty = new Set(this.bySet.keys())
  }

  private note(station: string, set: number): void {
    const s = this.setsOf.get(station)
    if (!s) this.setsOf.set(station, [set])
    else if (s[s.length - 1] !== set) s.push(set)
  }

  /** a station was placed: its sets are worth another look */
  touch(station: string): void {
    for (const set of this.setsOf.get(station) ?? []) if (this.bySet.has(set)) this.dirty.add(set)
  }

  orient(coords: Map<string, XY>, orientation: Float64Array): boolean {
    let progress = false
    const look = this.dirty
    this.dirty = new Set()
    for (const set of look) {
      const dirs = this.bySet.get(set)
      if (!dirs) continue
      if (!Number.isNaN(orientation[set])) {
        this.bySet.delete(set)
        continue
      }
      let s = 0
      let c = 0
      let any = false
      for (const d of dirs) {
        const a = coords.get(d.at)
        const b = coords.get(d.to)
        if (!a || !b) continue
        const w = azimuth(a.e, a.n, b.e, b.n) - d.value
        s += Math.sin(w)
        c += Math.cos(w)
        any = true
      }
      if (any) {
        orientation[set] = Math.atan2(s, c)
        this.bySet.delete(set)
        progress = true
      }
    }
    return progress
  }
}

/** Binary min-heap of station indices (the stations of one pass, in input order). */
class MinHeap {
  private a: number[] = []
  get size(): number {
    return this.a.length
  }
  push(v: number): void {
    const a = this.a
    let i = a.length
    a.push(v)
    while (i > 0) {
      const p = (i - 1) >> 1
      if (a[p] <= v) break
      a[i] = a[p]
      i = p
    }
    a[i] = v
  }
  pop(): number {
    const a = this.a
    const top = a[0]
    const last = a.pop()!
    if (a.length > 0) {
      let i = 0
      for (;;) {
        const l = 2 * i + 1
        if (l >= a.length) break
        const r = l + 1
        const c = r < a.length && a[r] < a[l] ? r : l
        if (a[c] >= last) break
        a[i] = a[c]
        i = c
      }
      a[i] = last
    }
    return top
  }
}

function orientSets(input: PlaneApproxInput, coords: Map<string, XY>, orientation: Float64Array): boolean {
  let progress = false
  const sum = new Map<number, { s: number; c: number }>()
  for (const d of input.directions) {
    if (!Number.isNaN(orientation[d.set])) continue
    const a = coords.get(d.at)
    const b = coords.get(d.to)
    if (!a || !b) continue
    const w = azimuth(a.e, a.n, b.e, b.n) - d.value
    const acc = sum.get(d.set) ?? { s: 0, c: 0 }
    acc.s += Math.sin(w)
    acc.c += Math.cos(w)
    sum.set(d.set, acc)
  }
  for (const [set, acc] of sum) {
    orientation[set] = Math.atan2(acc.s, acc.c)
    progress = true
  }
  return progress
}

type StationObs = Pick<PlaneApproxInput, 'directions' | 'angles' | 'distances' | 'azimuths'>
const EMPTY: StationObs = { directions: [], angles: [], distances: [], azimuths: [] }

/** Observations that involve each station (for the directions: as target or as set station). */
function indexByStation(input: PlaneApproxInput): Map<string, StationObs> {
  const m = new Map<string, StationObs>()
  const get = (s: string) => {
    let e = m.get(s)
    if (!e) m.set(s, (e = { directions: [], angles: [], distances: [], azimuths: [] }))
    return e
  }
  for (const d of input.directions) {
    get(d.to).directions.push(d)
    if (d.at !== d.to) get(d.at).directions.push(d)
  }
  // each row once per distinct station it touches (no Set per row: this runs for every row of a large network)
  for (const g of input.angles) {
    get(g.at).angles.push(g)
    if (g.from !== g.at) get(g.from).angles.push(g)
    if (g.to !== g.at && g.to !== g.from) get(g.to).angles.push(g)
  }
  for (const d of input.distances) {
    get(d.at).distances.push(d)
    if (d.to !== d.at) get(d.to).distances.push(d)
  }
  for (const z of input.azimuths) {
    get(z.at).azimuths.push(z)
    if (z.to !== z.at) get(z.to).azimuths.push(z)
  }
  return m
}

function place(
  st: string,
  input: StationObs,
  coords: Map<string, XY>,
  orientation: Float64Array,
  allowAmbiguous: boolean,
): XY | null {
  const rays: Ray[] = []
  const circles: { c: XY; cName: string; r: number }[] = []
  for (const d of input.directions) {
    if (d.to === st && !Number.isNaN(orientation[d.set])) {
      const from = coords.get(d.at)
      if (from) rays.push({ from, fromName: d.at, az: d.value + orientation[d.set] })
    }
  }
  for (const z of input.azimuths) {
    if (z.to === st && coords.has(z.at)) rays.push({ from: coords.get(z.at)!, fromName: z.at, az: z.value })
    if (z.at === st && coords.has(z.to)) rays.push({ from: coords.get(z.to)!, fromName: z.to, az: z.value + Math.PI })
  }
  for (const g of input.angles) {
    const at = coords.get(g.at)
    if (!at) continue
    if (g.to === st && coords.has(g.from)) {
      const b = coords.get(g.from)!
      rays.push({ from: at, fromName: g.at, az: azimuth(at.e, at.n, b.e, b.n) + g.value })
    }
    if (g.from === st && coords.has(g.to)) {
      const f = coords.get(g.to)!
      rays.push({ from: at, fromName: g.at, az: azimuth(at.e, at.n, f.e, f.n) - g.value })
    }
  }
  for (const d of input.distances) {
    const other = d.at === st ? d.to : d.to === st ? d.at : null
    if (other && coords.has(other)) circles.push({ c: coords.get(other)!, cName: other, r: d.value })
  }
  // polar
  for (const ray of rays) {
    const c = circles.find((k) => k.cName === ray.fromName)
    if (c) return { e: ray.from.e + c.r * Math.sin(ray.az), n: ray.from.n + c.r * Math.cos(ray.az) }
  }
  // intersection of two rays from different stations
  for (let i = 0; i < rays.length; i++) {
    for (let j = i + 1; j < rays.length; j++) {
      if (rays[i].fromName === rays[j].fromName) continue
      const p = intersectRays(rays[i], rays[j])
      if (p) return p
    }
  }
  // free station / resection from this station's own direction sets
  const own = input.directions.filter((d) => d.at === st && coords.has(d.to))
  const bySet = new Map<number, ApproxDirection[]>()
  for (const d of own) {
    const l = bySet.get(d.set)
    if (l) l.push(d)
    else bySet.set(d.set, [d])
  }
  for (const dirs of bySet.values()) {
    const targets = new Set(dirs.map((d) => d.to))
    const withDist = dirs.filter((d) => circles.some((c) => c.cName === d.to))
    if (new Set(withDist.map((d) => d.to)).size >= 2) {
      const p = freeStation(withDist, circles, coords)
      if (p) return p
    }
    if (targets.size >= 3) {
      const p = resection(dirs, coords)
      if (p) return p
    }
  }
  // distance–distance
  for (let i = 0; i < circles.length; i++) {
    for (let j = i + 1; j < circles.length; j++) {
      if (circles[i].cName === circles[j].cName) continue
      const cand = intersectCircles(circles[i], circles[j])
      if (!cand) continue
      const check = (p: XY): number => {
        let s = 0
        for (const k of circles) {
          if (k === circles[i] || k === circles[j]) continue
          s += Math.abs(Math.hypot(p.e - k.c.e, p.n - k.c.n) - k.r)
        }
        for (const ray of rays) s += Math.abs(wrapPi(azimuth(ray.from.e, ray.from.n, p.e, p.n) - ray.az)) * 1000
        return s
      }
      const others = circles.length - 2 + rays.length
      if (others > 0) return check(cand[0]) <= check(cand[1]) ? cand[0] : cand[1]
      if (allowAmbiguous) return cand[0]
    }
  }
  return null
}

function intersectRays(a: Ray, b: Ray): XY | null {
  const da = { e: Math.sin(a.az), n: Math.cos(a.az) }
  const db = { e: Math.sin(b.az), n: Math.cos(b.az) }
  const den = da.e * db.n - da.n * db.e
  // rays crossing at less than about 3° give no usable position
  if (Math.abs(den) < 0.05) return null
  const we = b.from.e - a.from.e
  const wn = b.from.n - a.from.n
  const t = (we * db.n - wn * db.e) / den
  const s = (we * da.n - wn * da.e) / den
  if (t <= 0 || s <= 0) return null
  return { e: a.from.e + t * da.e, n: a.from.n + t * da.n }
}

function intersectCircles(a: { c: XY; r: number }, b: { c: XY; r: number }): [XY, XY] | null {
  const dx = b.c.e - a.c.e
  const dy = b.c.n - a.c.n
  const d = Math.hypot(dx, dy)
  if (d === 0 || d > a.r + b.r + 1e-6 * d || d < Math.abs(a.r - b.r) - 1e-6 * d) return null
  const x = (a.r * a.r - b.r * b.r + d * d) / (2 * d)
  const h = Math.sqrt(Math.max(a.r * a.r - x * x, 0))
  const me = a.c.e + (x * dx) / d
  const mn = a.c.n + (x * dy) / d
  return [
    { e: me + (h * dy) / d, n: mn - (h * dx) / d },
    { e: me - (h * dy) / d, n: mn + (h * dx) / d },
  ]
}

/** Rotation + translation of the set's local polar frame onto two or more placed targets. */
function freeStation(dirs: ApproxDirection[], circles: { cName: string; r: number }[], coords: Map<string, XY>): XY | null {
  const loc: { x: XY; p: XY }[] = []
  for (const d of dirs) {
    const r = circles.find((c) => c.cName === d.to)!.r
    loc.push({ x: { e: r * Math.sin(d.value), n: r * Math.cos(d.value) }, p: coords.get(d.to)! })
  }
  // the set's origin is the instrument station
  return rigidMap(loc, 1)({ e: 0, n: 0 })
}

function mean(ps: XY[]): XY {
  return { e: ps.reduce((a, p) => a + p.e, 0) / ps.length, n: ps.reduce((a, p) => a + p.n, 0) / ps.length }
}

/** Resection from ≥ 3 directions of one set: Gauss–Newton in (E, N, ω) from several starts. */
function resection(dirs: ApproxDirection[], coords: Map<string, XY>): XY | null {
  const pts = dirs.map((d) => ({ p: coords.get(d.to)!, r: d.value }))
  const c = mean(pts.map((x) => x.p))
  const spread = Math.max(...pts.map((x) => Math.hypot(x.p.e - c.e, x.p.n - c.n)), 1)
  let best: { xy: XY; rms: number } | null = null
  for (let k = 0; k < 12; k++) {
    const ang = (k / 12) * TWO_PI
    const rad = k % 2 === 0 ? 0.5 * spread : 1.5 * spread
    let e = c.e + rad * Math.sin(ang)
    let n = c.n + rad * Math.cos(ang)
    let w = 0
    {
      let ss = 0
      let cc = 0
      for (const x of pts) {
        const v = azimuth(e, n, x.p.e, x.p.n) - x.r
        ss += Math.sin(v)
        cc += Math.cos(v)
      }
      w = Math.atan2(ss, cc)
    }
    let rms = Infinity
    for (let it = 0; it < 30; it++) {
      // 3 unknowns: tiny normal equations are fine here, this only seeds the real adjustment
      const ata = [0, 0, 0, 0, 0, 0, 0, 0, 0]
      const atl = [0, 0, 0]
      let ss = 0
      for (const x of pts) {
        const de = x.p.e - e
        const dn = x.p.n - n
        const d2 = de * de + dn * dn
        const row = [-dn / d2, de / d2, -1]
        const l = wrapPi(x.r - (azimuth(e, n, x.p.e, x.p.n) - w))
        ss += l * l
        for (let i = 0; i < 3; i++) {
          atl[i] += row[i] * l
          for (let j = 0; j < 3; j++) ata[i * 3 + j] += row[i] * row[j]
        }
      }
      rms = Math.sqrt(ss / pts.length)
      const dx = solve3(ata, atl)
      if (!dx) break
      e += dx[0]
      n += dx[1]
      w += dx[2]
      if (Math.abs(dx[0]) + Math.abs(dx[1]) < 1e-9 * spread) break
    }
    if (Number.isFinite(rms) && (!best || rms < best.rms)) best = { xy: { e, n }, rms }
  }
  return best && best.rms < 1e-3 ? best.xy : null
}

function solve3(a: number[], b: number[]): number[] | null {
  const det =
    a[0] * (a[4] * a[8] - a[5] * a[7]) - a[1] * (a[3] * a[8] - a[5] * a[6]) + a[2] * (a[3] * a[7] - a[4] * a[6])
  if (!Number.isFinite(det) || Math.abs(det) < 1e-300) return null
  const col = (k: number) => {
    const m = a.slice()
    m[k] = b[0]
    m[3 + k] = b[1]
    m[6 + k] = b[2]
    return m[0] * (m[4] * m[8] - m[5] * m[7]) - m[1] * (m[3] * m[8] - m[5] * m[6]) + m[2] * (m[3] * m[7] - m[4] * m[6])
  }
  return [col(0) / det, col(1) / det, col(2) / det]
}

export interface HeightLine {
  at: string
  to: string
  dh: number
}

/** Heights spread from known heights along height differences (breadth first). */
export function approximateHeights(
  stations: string[],
  known: Map<string, number>,
  lines: HeightLine[],
  seedIfEmpty: boolean,
): { heights: Map<string, number>; unplaced: string[] } {
  const h = new Map(known)
  if (h.size === 0 && seedIfEmpty && stations.length) h.set(stations[0], 0)
  let progress = true
  while (progress) {
    progress = false
    for (const l of lines) {
      if (h.has(l.at) && !h.has(l.to)) {
        h.set(l.to, h.get(l.at)! + l.dh)
        progress = true
      } else if (h.has(l.to) && !h.has(l.at)) {
        h.set(l.at, h.get(l.to)! - l.dh)
        progress = true
      }
    }
  }
  return { heights: h, unplaced: stations.filter((s) => !h.has(s)) }
}
