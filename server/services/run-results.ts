// The results of a finished run: stored once in three tables (adjusted
// stations, observation results, relative precisions) with COPY inside the
// run's transaction, plus a typed summary on the run row; read back by page,
// sorted and filtered in SQL, compared between two runs in SQL, and exported
// as CSV streamed straight out of COPY TO STDOUT. The tables are the one
// source of truth: nothing else holds a run's stations or observations.
import { PassThrough, type Readable } from 'node:stream'
import { sql, type SQL } from 'drizzle-orm'
import { to as copyTo } from 'pg-copy-streams'
import type { CompareQuery, ObservationPageQuery, RelativePageQuery, StationPageQuery, VectorPageQuery } from '../../shared/schemas/run-results'
import { useDb, usePool } from '../db/client'
import type { Tx } from '../db/client'
import { chunked, copyBool, copyInto, copyNumber, copyStat, copyText } from '../db/copy'
import type { Adjustment } from '../db/schema'
import { METRES_PER } from '../engine/io/units'
import { precisionScale, type PrecisionUnit } from '../../shared/precision'
import type { AdjustmentResult, AdjustSettings, GlobalTest, GridReductionSummary, NetworkSummary, ObservationResult, RelativeResult, StationResult, VectorTest } from '../engine/types'
import { describeTolerance, type ToleranceSpec } from './accuracy'
import { safeCellSql } from './csv'
import { NATURAL_COLLATION } from '../../shared/natural-sort'
import { packMap, type MapLineIn, type MapStationIn, type PackedMap } from '../../shared/map-overview'

// ── the summary ─────────────────────────────────────────────────────────────

/** What a finished run keeps on its own row: global figures only, never per-station or per-observation lists. */
export interface RunSummary {
  converged: boolean
  iterations: number
  dof: number
  sigma0: number | null
  globalTest: GlobalTest
  counts: AdjustmentResult['counts']
  health: AdjustmentResult['health']
  critical: AdjustmentResult['critical']
  plane: NetworkSummary | null
  height: NetworkSummary | null
  /** observations in use that fail data snooping (|w| above the critical value) */
  flagged: number
  /** observations in use that fail data snooping or the τ test */
  flaggedAny?: number
  weak: number
  excluded: number
  confidence: number
  scaling: AdjustSettings['scaling']
  alpha: number
  alpha0: number
  beta0: number
  weakRedundancy: number
  /** the engine's settings as used */
  settings?: AdjustSettings
  gridReduction?: GridReductionSummary | null
  /** how each observation set was weighted (server/services/run-inputs.ts) */
  weighting?: unknown
  /** data snooping tests each observation at α0: even a sound network flags about n·α0 by chance */
  chance?: { tested: number; expectedFlags: number }
  tolerance: (ToleranceSpec & { description: string }) | null
  relative: { checked: number; passed: number; failed: number }
  /** rows stored: stations, observation results (with control rows) and relative precisions */
  rows?: { stations: number; observations: number; relative: number }
  engineMs: number
  /** time to store the three result tables (COPY), ms */
  storeMs?: number
  /** time to compute and keep the run page's overview (map and histograms), ms */
  overviewMs?: number
  /** refraction coefficient k and its σ the run used */
  refraction: AdjustmentResult['refraction'] | null
  /** combined 3D adjustment (GNSS vectors): the model's facts for the report; null for a plane and height run */
  network3d: AdjustmentResult['network3d'] | null
  warnings: string[]
}

export function buildSummary(r: AdjustmentResult, tolerance: (ToleranceSpec & { name?: string }) | null, passes: (boolean | null)[], engineMs: number, warnings: string[], runWeighting?: unknown): RunSummary {
  let tested = 0
  for (const o of r.observations) if (!o.excluded && o.kind !== 'control' && o.w !== null) tested++
  let flagged = 0
  let flaggedAny = 0
  let weak = 0
  let excluded = 0
  for (const o of r.observations) {
    if (o.excluded) { excluded++; continue }
    if (o.kind === 'control') continue
    if (o.flagged) flagged++
    if (o.weak) weak++
  }
  for (const o of r.observations) if (!o.excluded && (o.flagged || o.tauFlagged)) flaggedAny++
  const weighting = runWeighting ?? (r as { weighting?: unknown }).weighting
  return {
    converged: r.converged, iterations: r.iterations, dof: r.dof, sigma0: r.sigma0, globalTest: r.globalTest, counts: r.counts,
    health: r.health, critical: r.critical, plane: r.plane ?? null, height: r.height ?? null,
    flagged, flaggedAny, weak, excluded,
    confidence: r.settings.confidence, scaling: r.settings.scaling, alpha: r.settings.alpha, alpha0: r.settings.alpha0, beta0: r.settings.beta0,
    weakRedundancy: r.settings.weakRedundancy, settings: r.settings, gridReduction: r.gridReduction ?? null,
    // the geodetic settings the run used (project settings at queue time), shown with the run
    refraction: r.refraction ?? null,
    network3d: r.network3d ?? null,
    ...(weighting !== undefined ? { weighting } : {}),
    tolerance: tolerance ? { ...tolerance, description: describeTolerance(tolerance) } : null,
    relative: { checked: passes.filter((p) => p !== null).length, passed: passes.filter((p) => p === true).length, failed: passes.filter((p) => p === false).length },
    rows: { stations: r.stations.length, observations: r.observations.length, relative: r.relative.length },
    chance: { tested, expectedFlags: tested * r.settings.alpha0 },
    engineMs, warnings,
  }
}

// ── storing ─────────────────────────────────────────────────────────────────

const STATION_COLUMNS = 'firm_id, adjustment_id, name, kind, fixed, east, north, height, sd_east, sd_north, sd_height, semi_major, semi_minor, azimuth_deg, semi_major95, semi_minor95, controlled_east, controlled_north, controlled_height'
const OBSERVATION_COLUMNS = 'firm_id, adjustment_id, observation_id, line, kind, component, at, "from", "to", observed, adjusted, value_unit, residual, sigma, residual_unit, redundancy, w, tau, mdb, mdb_effect, flagged, tau_flagged, weak, excluded, remark, combined_factor, elevation_factor, scale_factor, vector_statistic, vector_critical, vector_distribution, vector_flagged, residual_e, residual_n, residual_u'
const RELATIVE_COLUMNS = 'firm_id, adjustment_id, from_station, to_station, distance, semi_major, semi_minor, azimuth_deg, semi_major95, sd_distance, allowable, passes'

export interface RelativeCheck { rel: RelativeResult; check: { semiMajor95: number; allowable: number | null; passes: boolean | null } }

/**
 * Writes the three result tables of one run with COPY on the transaction's
 * connection (rows keep the engine's order: ids follow it). Returns the time
 * taken in ms.
 */
export async function storeResults(tx: Tx, firmId: number, runId: number, r: AdjustmentResult, stationKinds: Map<string, 'control' | 'new'>, rel: RelativeCheck[]): Promise<number> {
  const t0 = performance.now()
  const head = `${firmId}\t${runId}\t`
  await copyInto(tx, 'adjusted_stations', STATION_COLUMNS, chunked(r.stations, (s) =>
    head + copyText(s.name) + '\t' + (stationKinds.get(s.name) ?? s.kind) + '\t' + copyBool(s.fixed) + '\t'
    + copyStat(s.east) + '\t' + copyStat(s.north) + '\t' + copyStat(s.height) + '\t' + copyStat(s.sdEast) + '\t' + copyStat(s.sdNorth) + '\t' + copyStat(s.sdHeight) + '\t'
    + copyStat(s.ellipse?.semiMajor) + '\t' + copyStat(s.ellipse?.semiMinor) + '\t' + copyStat(s.ellipse?.azimuthDeg ?? s.ellipse95?.azimuthDeg) + '\t'
    + copyStat(s.ellipse95?.semiMajor) + '\t' + copyStat(s.ellipse95?.semiMinor) + '\t'
    + copyBool(s.controlled.east) + '\t' + copyBool(s.controlled.north) + '\t' + copyBool(s.controlled.height) + '\n'))
  await copyInto(tx, 'observation_results', OBSERVATION_COLUMNS, chunked(r.observations, (o) =>
    head + (typeof o.id === 'number' ? String(o.id) : '\\N') + '\t' + o.line + '\t' + o.kind + '\t' + copyText(o.component) + '\t'
    + copyText(o.at) + '\t' + copyText(o.from) + '\t' + copyText(o.to) + '\t' + copyNumber(o.observed) + '\t' + copyStat(o.adjusted) + '\t' + o.valueUnit + '\t'
    + copyStat(o.residual) + '\t' + copyStat(o.sigma) + '\t' + o.residualUnit + '\t' + copyStat(o.redundancy) + '\t' + copyStat(o.w) + '\t' + copyStat(o.tau) + '\t'
    + copyStat(o.mdb) + '\t' + copyStat(o.mdbEffect) + '\t' + copyBool(o.flagged) + '\t' + copyBool(o.tauFlagged) + '\t' + copyBool(o.weak) + '\t' + copyBool(o.excluded) + '\t'
    + copyText(o.remark) + '\t' + copyStat(o.combinedFactor) + '\t' + copyStat(o.elevationFactor) + '\t' + copyStat(o.scaleFactor) + '\t'
    + vectorCells(o.vectorTest) + '\n'))
  await copyInto(tx, 'relative_precisions', RELATIVE_COLUMNS, chunked(rel, ({ rel: p, check }) =>
    head + copyText(p.from) + '\t' + copyText(p.to) + '\t' + copyNumber(p.distance) + '\t' + copyNumber(p.semiMajor) + '\t' + copyNumber(p.semiMinor) + '\t'
    + copyNumber(p.azimuthDeg) + '\t' + copyNumber(check.semiMajor95) + '\t' + copyStat(p.sdDistance) + '\t' + copyStat(check.allowable) + '\t' + copyBool(check.passes) + '\n'))
  return Math.round(performance.now() - t0)
}

/** The seven vector-test cells of a gnss_baseline component row (NULL on every other row). */
function vectorCells(t: VectorTest | undefined): string {
  if (!t) return '\\N\t\\N\t\\N\t\\N\t\\N\t\\N\t\\N'
  return copyStat(t.statistic) + '\t' + copyStat(t.critical) + '\t' + copyText(t.distribution) + '\t' + copyBool(t.flagged) + '\t'
    + copyStat(t.residualEnu[0]) + '\t' + copyStat(t.residualEnu[1]) + '\t' + copyStat(t.residualEnu[2])
}

// ── rows back into the engine's shapes ──────────────────────────────────────

const STATION_SELECT = sql.raw(`name, kind, fixed, east, north, height, sd_east as "sdEast", sd_north as "sdNorth", sd_height as "sdHeight",
  semi_major as "semiMajor", semi_minor as "semiMinor", azimuth_deg as "azimuthDeg", semi_major95 as "semiMajor95", semi_minor95 as "semiMinor95",
  controlled_east as "controlledEast", controlled_north as "controlledNorth", controlled_height as "controlledHeight"`)
type StationRow = {
  name: string; kind: 'control' | 'new'; fixed: boolean; east: number | null; north: number | null; height: number | null
  sdEast: number | null; sdNorth: number | null; sdHeight: number | null; semiMajor: number | null; semiMinor: number | null; azimuthDeg: number | null
  semiMajor95: number | null; semiMinor95: number | null; controlledEast: boolean; controlledNorth: boolean; controlledHeight: boolean
}
export function stationOf(s: StationRow): StationResult {
  return {
    name: s.name, east: s.east, north: s.north, height: s.height, sdEast: s.sdEast, sdNorth: s.sdNorth, sdHeight: s.sdHeight,
    ellipse: s.semiMajor !== null && s.semiMinor !== null ? { semiMajor: s.semiMajor, semiMinor: s.semiMinor, azimuthDeg: s.azimuthDeg ?? 0 } : null,
    ellipse95: s.semiMajor95 !== null && s.semiMinor95 !== null ? { semiMajor: s.semiMajor95, semiMinor: s.semiMinor95, azimuthDeg: s.azimuthDeg ?? 0 } : null,
    fixed: s.fixed, kind: s.kind, controlled: { east: s.controlledEast, north: s.controlledNorth, height: s.controlledHeight },
  }
}

const OBSERVATION_SELECT = sql.raw(`observation_id as "id", line, kind, component, at, "from", "to", observed, adjusted, value_unit as "valueUnit",
  residual, sigma, residual_unit as "residualUnit", redundancy, w, flagged, tau, tau_flagged as "tauFlagged", mdb, mdb_effect as "mdbEffect",
  excluded, weak, remark, combined_factor as "combinedFactor", elevation_factor as "elevationFactor", scale_factor as "scaleFactor",
  vector_statistic as "vStatistic", vector_critical as "vCritical", vector_distribution as "vDistribution", vector_flagged as "vFlagged",
  residual_e as "vE", residual_n as "vN", residual_u as "vU"`)
type ObservationRow = Omit<ObservationResult, 'combinedFactor' | 'elevationFactor' | 'scaleFactor' | 'vectorTest'> & {
  combinedFactor: number | null; elevationFactor: number | null; scaleFactor: number | null
  vStatistic: number | null; vCritical: number | null; vDistribution: string | null; vFlagged: boolean | null; vE: number | null; vN: number | null; vU: number | null
}
export function observationOf(o: ObservationRow): ObservationResult {
  const { combinedFactor, elevationFactor, scaleFactor, vStatistic, vCritical, vDistribution, vFlagged, vE, vN, vU, ...rest } = o
  const vectorTest: VectorTest | null = vStatistic !== null && vCritical !== null
    ? { statistic: vStatistic, critical: vCritical, distribution: vDistribution === 'F' ? 'F' : 'chi2', flagged: vFlagged === true, residualEnu: [vE ?? Number.NaN, vN ?? Number.NaN, vU ?? Number.NaN] }
    : null
  return {
    ...rest, ...(combinedFactor !== null ? { combinedFactor } : {}), ...(elevationFactor !== null ? { elevationFactor } : {}), ...(scaleFactor !== null ? { scaleFactor } : {}),
    ...(vectorTest ? { vectorTest } : {}),
  }
}

const RELATIVE_SELECT = sql.raw(`from_station as "from", to_station as "to", distance, semi_major as "semiMajor", semi_minor as "semiMinor",
  azimuth_deg as "azimuthDeg", semi_major95 as "semiMajor95", sd_distance as "sdDistance", allowable, passes`)
export type RelativeRow = { from: string; to: string; distance: number; semiMajor: number; semiMinor: number; azimuthDeg: number; semiMajor95: number; sdDistance: number | null; allowable: number | null; passes: boolean | null }

// ── pages ───────────────────────────────────────────────────────────────────

export interface Page<T> { page: number; size: number; total: number; sort: string; rows: T[] }

/**
 * `table.id`, qualified: a bare `id` in ORDER BY names an output column first, and the observation
 * page selects observation_id AS "id" (null on control and vector rows), which left them unordered.
 */
function orderBy(table: string, sort: string, columns: Record<string, string | readonly string[]>): SQL {
  const desc = sort.startsWith('-')
  const id = `${table}.id`
  const col = columns[desc ? sort.slice(1) : sort] ?? 'id'
  // a sort of several columns (a pair: from, then to) goes the one way in each
  const exprs = (typeof col === 'string' ? [col] : col).map((c) => `${c === 'id' ? id : c} ${desc ? 'desc' : 'asc'} nulls last`)
  return sql.raw(`${exprs.join(', ')}, ${id} asc`)
}

/** `needle` inside `column`, case-insensitive, with no LIKE wildcards to escape. */
const contains = (column: string, needle: string) => sql`position(lower(${needle}) in lower(${sql.raw(column)})) > 0`

/** `known`: the unfiltered total when the caller has it (the summary's row counts), saving the count. */
async function paged<T>(table: string, select: SQL, where: SQL[], order: SQL, q: { page: number; size: number; sort: string }, map: (row: any) => T, known?: number): Promise<Page<T>> {
  const db = useDb()
  const cond = sql.join(where, sql` and `)
  const useKnown = known !== undefined && where.length === 1
  const [rows, count] = await Promise.all([
    db.execute(sql`select ${select} from ${sql.raw(table)} where ${cond} order by ${order} limit ${q.size} offset ${(q.page - 1) * q.size}`),
    useKnown ? Promise.resolve({ rows: [{ n: known }] }) : db.execute<{ n: number }>(sql`select count(*)::int as n from ${sql.raw(table)} where ${cond}`),
  ])
  return { page: q.page, size: q.size, total: count.rows[0]?.n ?? 0, sort: q.sort, rows: rows.rows.map(map) }
}

/** a station-name column in natural order (KF2 before KF10): migration 0007, shared/natural-sort.ts */
const NAME = (column: string) => `${column} collate "${NATURAL_COLLATION}"`

const runScope = (firmId: number, runId: number) => sql`firm_id = ${firmId} and adjustment_id = ${runId}`

const STATION_SORT_SQL: Record<string, string> = {
  order: 'id', name: NAME('name'), east: 'east', north: 'north', height: 'height', sdEast: 'sd_east', sdNorth: 'sd_north', sdHeight: 'sd_height', semiMajor95: 'semi_major95',
}
export function pageStations(firmId: number, runId: number, known: number | undefined, q: StationPageQuery): Promise<Page<StationResult>> {
  const where = [runScope(firmId, runId)]
  if (q.q) where.push(contains('name', q.q))
  if (q.kind) where.push(sql`kind = ${q.kind}`)
  if (q.fixed !== undefined) where.push(sql`fixed = ${q.fixed}`)
  return paged('adjusted_stations', STATION_SELECT, where, orderBy('adjusted_stations', q.sort, STATION_SORT_SQL), q, stationOf, known)
}

/** mm for lengths and arcseconds for angles, so one |residual| order makes sense across kinds (as the table shows them). */
const NATURAL = `case when residual_unit = 'm' then 1000 else 1 end`
const OBSERVATION_SORT_SQL: Record<string, string> = {
  order: 'id', line: 'line', absW: 'abs(w)', w: 'w', tau: 'abs(tau)', redundancy: 'redundancy', absResidual: `abs(residual) * ${NATURAL}`,
  mdb: `mdb * ${NATURAL}`, kind: 'kind::text', at: NAME('at'),
}
/** The residual table's rating in SQL (rateObservation in composables/useRunFormat.ts). */
const FAILS = `(not excluded and (flagged or tau_flagged or coalesce(vector_flagged, false)))`
const WATCH = `(not excluded and not (flagged or tau_flagged or coalesce(vector_flagged, false)) and (coalesce(abs(w), 0) > 2 or weak))`
export function pageObservations(firmId: number, runId: number, known: number | undefined, q: ObservationPageQuery): Promise<Page<ObservationResult>> {
  const where = [runScope(firmId, runId)]
  if (q.q) where.push(sql`(${contains('at', q.q)} or ${contains('"to"', q.q)} or ${contains('coalesce("from", \'\')', q.q)})`)
  if (q.station) where.push(sql`(at = ${q.station} or "to" = ${q.station} or "from" = ${q.station})`)
  if (q.flagged !== undefined) where.push(q.flagged ? sql.raw(FAILS) : sql.raw(`not ${FAILS}`))
  if (q.weak !== undefined) where.push(sql`weak = ${q.weak}`)
  if (q.excluded !== undefined) where.push(sql`excluded = ${q.excluded}`)
  if (q.kind) where.push(sql`kind = ${q.kind}`)
  if (q.rating === 'fail') where.push(sql.raw(FAILS))
  if (q.rating === 'watch') where.push(sql.raw(WATCH))
  if (q.rating === 'pass') where.push(sql.raw(`not ${FAILS} and not ${WATCH}`))
  return paged('observation_results', OBSERVATION_SELECT, where, orderBy('observation_results', q.sort, OBSERVATION_SORT_SQL), q, observationOf, known)
}

/** One GNSS vector of a run with its whole-vector test (the three component rows folded into one). */
export interface VectorRow {
  id: number | null
  line: number
  at: string
  to: string
  /** observed ΔX ΔY ΔZ (m) */
  observed: [number | null, number | null, number | null]
  /** residuals of ΔX ΔY ΔZ (m) and their w */
  residual: [number | null, number | null, number | null]
  w: [number | null, number | null, number | null]
  excluded: boolean
  remark: string | null
  /** null when the vector was not tested (excluded, or no redundancy) */
  test: VectorTest | null
}

const VECTOR_SELECT = sql.raw(`observation_id as "id", min(line) as "line", at, "to", bool_or(excluded) as "excluded", max(remark) as "remark",
  max(observed) filter (where component = 'dx') as ox, max(observed) filter (where component = 'dy') as oy, max(observed) filter (where component = 'dz') as oz,
  max(residual) filter (where component = 'dx') as vx, max(residual) filter (where component = 'dy') as vy, max(residual) filter (where component = 'dz') as vz,
  max(w) filter (where component = 'dx') as wx, max(w) filter (where component = 'dy') as wy, max(w) filter (where component = 'dz') as wz,
  max(vector_statistic) as "statistic", max(vector_critical) as "critical", max(vector_distribution) as "distribution", bool_or(vector_flagged) as "flagged",
  max(residual_e) as "e", max(residual_n) as "n", max(residual_u) as "u"`)
const VECTOR_SORT_SQL: Record<string, string> = {
  order: 'min(id)', line: 'min(line)', at: 'at', ratio: 'max(vector_statistic) / nullif(max(vector_critical), 0)',
}
type VectorSqlRow = {
  id: number | null; line: number; at: string; to: string; excluded: boolean; remark: string | null
  ox: number | null; oy: number | null; oz: number | null; vx: number | null; vy: number | null; vz: number | null; wx: number | null; wy: number | null; wz: number | null
  statistic: number | null; critical: number | null; distribution: string | null; flagged: boolean | null; e: number | null; n: number | null; u: number | null
}
function vectorOf(r: VectorSqlRow): VectorRow {
  return {
    id: r.id, line: r.line, at: r.at, to: r.to, excluded: r.excluded, remark: r.remark,
    observed: [r.ox, r.oy, r.oz], residual: [r.vx, r.vy, r.vz], w: [r.wx, r.wy, r.wz],
    test: r.statistic !== null && r.critical !== null
      ? { statistic: r.statistic, critical: r.critical, distribution: r.distribution === 'F' ? 'F' : 'chi2', flagged: r.flagged === true, residualEnu: [r.e ?? Number.NaN, r.n ?? Number.NaN, r.u ?? Number.NaN] }
      : null,
  }
}
/** The run's GNSS vectors by page, one row per vector; worst test first by default. */
export async function pageVectors(firmId: number, runId: number, q: VectorPageQuery): Promise<Page<VectorRow>> {
  const db = useDb()
  const where = [runScope(firmId, runId), sql`kind = 'gnss_baseline'`]
  if (q.q) where.push(sql`(${contains('at', q.q)} or ${contains('"to"', q.q)})`)
  const having = q.flagged === undefined ? sql`true` : q.flagged ? sql`coalesce(bool_or(vector_flagged), false) and not bool_or(excluded)` : sql`not (coalesce(bool_or(vector_flagged), false) and not bool_or(excluded))`
  const cond = sql.join(where, sql` and `)
  const desc = q.sort.startsWith('-')
  const order = sql.raw(`${VECTOR_SORT_SQL[desc ? q.sort.slice(1) : q.sort] ?? 'min(id)'} ${desc ? 'desc' : 'asc'} nulls last, min(id) asc`)
  const [rows, count] = await Promise.all([
    db.execute(sql`select ${VECTOR_SELECT} from observation_results where ${cond} group by observation_id, at, "to" having ${having} order by ${order} limit ${q.size} offset ${(q.page - 1) * q.size}`),
    db.execute<{ n: number }>(sql`select count(*)::int as n from (select 1 from observation_results where ${cond} group by observation_id, at, "to" having ${having}) v`),
  ])
  return { page: q.page, size: q.size, total: count.rows[0]?.n ?? 0, sort: q.sort, rows: (rows.rows as unknown as VectorSqlRow[]).map(vectorOf) }
}

// `from` (the default) is the pair by its names, from then to, both natural, so a
// surveyor finds KF2–KF3 before KF10–KF11 (index relative_precisions_run_pair); `to` the other way round
const RELATIVE_SORT_SQL: Record<string, string | readonly string[]> = {
  order: 'id', from: [NAME('from_station'), NAME('to_station')], to: [NAME('to_station'), NAME('from_station')], distance: 'distance', semiMajor95: 'semi_major95', ratio: 'semi_major95 / nullif(allowable, 0)',
}
export function pageRelative(firmId: number, runId: number, known: number | undefined, q: RelativePageQuery): Promise<Page<RelativeRow>> {
  const where = [runScope(firmId, runId)]
  if (q.q) where.push(sql`(${contains('from_station', q.q)} or ${contains('to_station', q.q)})`)
  if (q.passes !== undefined) where.push(sql`passes = ${q.passes}`)
  return paged('relative_precisions', RELATIVE_SELECT, where, orderBy('relative_precisions', q.sort, RELATIVE_SORT_SQL), q, (r) => r as RelativeRow, known)
}

// ── overviews computed in SQL (histograms, redundancy bins, the map) ────────

/**
 * Runs the queries side by side on the pool, one after the other on a
 * transaction (one connection: pg would queue them anyway, and warns).
 */
async function allOn<T extends readonly (() => Promise<unknown>)[]>(db: Pick<Tx, 'execute'>, queries: T): Promise<{ -readonly [K in keyof T]: Awaited<ReturnType<T[K]>> }> {
  if (db === useDb()) return Promise.all(queries.map((q) => q())) as never
  const out: unknown[] = []
  for (const q of queries) out.push(await q())
  return out as never
}

/** Counts of w in 0.5-wide bins from −5 to 5 (outermost bins collect the rest) and of rᵢ in the redundancy report's bins. */
export async function distributions(firmId: number, runId: number, db: Pick<Tx, 'execute'> = useDb()) {
  const [w, r] = await allOn(db, [
    () => db.execute<{ bin: number; n: number }>(sql`select least(greatest(floor((w + 5) / 0.5), 0), 19)::int as bin, count(*)::int as n
      from observation_results where ${runScope(firmId, runId)} and not excluded and w is not null group by 1`),
    () => db.execute<{ bin: number; n: number }>(sql`select width_bucket(redundancy, array[0, 0.1, 0.2, 0.4, 0.6, 0.8, 1.0001]::float8[])::int as bin, count(*)::int as n
      from observation_results where ${runScope(firmId, runId)} and not excluded and redundancy is not null group by 1`),
  ] as const)
  const wBins = Array.from({ length: 20 }, () => 0)
  for (const row of w.rows) wBins[row.bin] = row.n
  const rBins = Array.from({ length: 6 }, () => 0)
  for (const row of r.rows) if (row.bin >= 1 && row.bin <= 6) rBins[row.bin - 1] = row.n
  return { w: { from: -5, width: 0.5, counts: wBins }, redundancy: { edges: [0, 0.1, 0.2, 0.4, 0.6, 0.8, 1], counts: rBins } }
}

/**
 * Everything the map draws, packed (shared/map-overview.ts): stations with
 * their ellipse at the run's confidence, and one line per connected pair
 * with its worst rating (0 pass, 1 watch, 2 fail). A 10,000-station run with
 * 30,000 lines is a few hundred KB.
 */
export async function mapData(firmId: number, runId: number, db: Pick<Tx, 'execute'> = useDb()): Promise<PackedMap> {
  const [st, ln] = await allOn(db, [
    () => db.execute<{ name: string; kind: string; fixed: boolean; east: number; north: number; a: number | null; b: number | null; az: number | null }>(sql`
      select name, kind, fixed, east, north, semi_major95 as a, semi_minor95 as b, azimuth_deg as az
      from adjusted_stations where ${runScope(firmId, runId)} and east is not null and north is not null order by id`),
    // GNSS vectors get their own line per pair (gnss = true, lineKind 1), so the map can draw them apart from total-station lines
    () => db.execute<{ p: string; q: string; rating: number; gnss: boolean }>(sql`
      select least(at, "to") as p, greatest(at, "to") as q,
        max(case when ${sql.raw(FAILS)} then 2 when ${sql.raw(WATCH)} then 1 else 0 end)::int as rating,
        kind = 'gnss_baseline' as gnss
      from observation_results where ${runScope(firmId, runId)} and kind <> 'control' and at <> "to" group by 1, 2, 4`),
  ] as const)
  const index = new Map<string, number>()
  const stations: MapStationIn[] = st.rows.map((s, i) => {
    index.set(s.name, i)
    // 0 new, 1 control held fixed, 2 control weighted or free; held stations draw no ellipse
    return { name: s.name, east: s.east, north: s.north, kind: s.kind !== 'control' ? 0 : s.fixed ? 1 : 2, a: s.fixed ? null : s.a, b: s.fixed ? null : s.b, az: s.az }
  })
  const lines: MapLineIn[] = []
  for (const l of ln.rows) {
    const i = index.get(l.p)
    const j = index.get(l.q)
    if (i !== undefined && j !== undefined) lines.push({ from: i, to: j, rating: l.rating, kind: l.gnss ? 1 : 0 })
  }
  return packMap(stations, lines)
}

/** The run page's overview: the packed map and the histograms. */
export async function computeOverview(firmId: number, runId: number, db: Pick<Tx, 'execute'> = useDb()) {
  const [map, dist] = await allOn(db, [() => mapData(firmId, runId, db), () => distributions(firmId, runId, db)] as const)
  return { ...map, distributions: dist }
}

/** Computes the overview of results just stored (same transaction) and keeps its JSON text in run_overviews. Returns the time taken in ms. */
export async function storeOverview(tx: Tx, firmId: number, runId: number): Promise<number> {
  const t0 = performance.now()
  const body = JSON.stringify(await computeOverview(firmId, runId, tx))
  await tx.execute(sql`insert into run_overviews (firm_id, adjustment_id, body) values (${firmId}, ${runId}, ${body})`)
  return Math.round(performance.now() - t0)
}

/** The overview's JSON text: as stored with the run, or computed for a run stored before overviews were kept. */
export async function overviewJson(firmId: number, runId: number): Promise<string> {
  const res = await useDb().execute<{ body: string }>(sql`select body from run_overviews where firm_id = ${firmId} and adjustment_id = ${runId}`)
  return res.rows[0]?.body ?? JSON.stringify(await computeOverview(firmId, runId))
}

// ── whole lists, for the sign-off and its accuracy check ────────────────────

export async function allStations(firmId: number, runId: number): Promise<StationResult[]> {
  const res = await useDb().execute(sql`select ${STATION_SELECT} from adjusted_stations where ${runScope(firmId, runId)} order by id`)
  return (res.rows as StationRow[]).map(stationOf)
}

export async function allRelative(firmId: number, runId: number): Promise<RelativeResult[]> {
  const res = await useDb().execute(sql`select ${RELATIVE_SELECT} from relative_precisions where ${runScope(firmId, runId)} order by id`)
  return (res.rows as unknown as RelativeRow[]).map((r) => ({ from: r.from, to: r.to, distance: r.distance, semiMajor: r.semiMajor, semiMinor: r.semiMinor, azimuthDeg: r.azimuthDeg, semiMajor95: r.semiMajor95, sdDistance: r.sdDistance ?? Number.NaN }))
}

/** Observations in use that fail data snooping or the τ test, counted in SQL (runs stored before the summary counted them). */
export async function countFlaggedAny(firmId: number, runId: number): Promise<number> {
  const res = await useDb().execute<{ n: number }>(sql`select count(*)::int as n from observation_results where ${runScope(firmId, runId)} and ${sql.raw(FAILS)}`)
  return res.rows[0]?.n ?? 0
}

/** The CLI's JSON shape (the engine README's result fields) out of the summary and some stations and observations. */
export function cliShape(s: RunSummary, stations: StationResult[], observations: ObservationResult[]) {
  const net = (n: NetworkSummary | null) => n && { dof: n.dof, sigma0: n.sigma0, globalTest: n.globalTest }
  return {
    converged: s.converged, iterations: s.iterations, dof: s.dof, sigma0: s.sigma0, globalTest: s.globalTest,
    stations: stations.map((x) => ({ name: x.name, east: x.east, north: x.north, height: x.height, sdEast: x.sdEast, sdNorth: x.sdNorth, sdHeight: x.sdHeight, ellipse: x.ellipse, fixed: x.fixed })),
    observations: observations.map((o) => ({ line: o.line, kind: o.kind, at: o.at, from: o.from, to: o.to, residual: o.residual, redundancy: o.redundancy, w: o.w, flagged: o.flagged, mdb: o.mdb })),
    ...(s.plane ? { plane: net(s.plane) } : {}),
    ...(s.height ? { height: net(s.height) } : {}),
  }
}

// ── comparing two runs in SQL ───────────────────────────────────────────────

export type ShiftRow = { name: string; dE: number | null; dN: number | null; dH: number | null; horiz: number | null; onlyA: boolean; onlyB: boolean }
export type ChangedObservation = { id: number | null; line: number; kind: string; component: string | null; at: string; from: string | null; to: string }

/** Which observation of run A is which in run B: the stored observation, else (for control rows) kind, station, component and line. */
const SAME_OBSERVATION = `coalesce(x.observation_id, -1) = coalesce(y.observation_id, -1) and x.line = y.line and x.kind = y.kind
  and x.at = y.at and x."to" = y."to" and coalesce(x.component::text, '') = coalesce(y.component::text, '')`
const CHANGE_LIMIT = 200

/** A vector's whole-vector test in one run: 'untested' when it had no redundancy, absent (null) when the run does not hold it. */
export type VectorVerdict = 'pass' | 'fail' | 'untested' | 'excluded'
export interface VectorSideTest { statistic: number | null; critical: number | null; distribution: 'chi2' | 'F' | null; verdict: VectorVerdict }
export interface VectorChange {
  id: number | null
  line: number
  at: string
  to: string
  a: VectorSideTest | null
  b: VectorSideTest | null
  /**
   * statistic in run B − statistic in run A; null unless both runs tested the
   * vector with the same distribution (a χ² statistic, σ0 known, and an F
   * statistic, σ0 estimated, are on different scales)
   */
  change: number | null
}
type VectorChangeSql = {
  id: number | null; line: number; at: string; to: string
  inA: boolean; sA: number | null; cA: number | null; dA: string | null; vA: VectorVerdict | null
  inB: boolean; sB: number | null; cB: number | null; dB: string | null; vB: VectorVerdict | null
  change: number | null
}

/**
 * The GNSS vectors of two runs side by side, one row per vector (its three
 * component rows folded, as on the vectors route), matched like the other
 * observations: by stored observation, line and marks. Rows whose verdict
 * changed come first, then the largest change of the test statistic. Null
 * when neither run holds a vector.
 */
async function compareVectors(firmId: number, a: Adjustment, b: Adjustment, page: number, size: number): Promise<Page<VectorChange> | null> {
  const db = useDb()
  const side = (runId: number) => sql`select observation_id as id, min(line) as line, at, "to", bool_or(excluded) as excluded,
      max(vector_statistic) as s, max(vector_critical) as c, max(vector_distribution) as d, bool_or(vector_flagged) as f
    from observation_results where ${runScope(firmId, runId)} and kind = 'gnss_baseline' group by observation_id, at, "to"`
  const verdict = (t: string) => sql.raw(`case when ${t}.line is null then null when ${t}.excluded then 'excluded' when ${t}.s is null or ${t}.c is null then 'untested' when ${t}.f then 'fail' else 'pass' end`)
  const pairs = sql`with x as (${side(a.id)}), y as (${side(b.id)}), p as (
      select coalesce(y.id, x.id) as id, coalesce(y.line, x.line) as line, coalesce(y.at, x.at) as at, coalesce(y."to", x."to") as "to",
        x.line is not null as "inA", x.s as "sA", x.c as "cA", x.d as "dA", ${verdict('x')} as "vA",
        y.line is not null as "inB", y.s as "sB", y.c as "cB", y.d as "dB", ${verdict('y')} as "vB",
        case when x.excluded or y.excluded or x.d is distinct from y.d then null else y.s - x.s end as change
      from x full join y on coalesce(x.id, -1) = coalesce(y.id, -1) and x.line = y.line and x.at = y.at and x."to" = y."to")`
  const [rows, count] = await Promise.all([
    db.execute<VectorChangeSql>(sql`${pairs} select * from p
      order by ("vA" is distinct from "vB") desc, abs(change) desc nulls last, line, id limit ${size} offset ${(page - 1) * size}`),
    db.execute<{ n: number }>(sql`${pairs} select count(*)::int as n from p`),
  ])
  const total = count.rows[0]?.n ?? 0
  if (total === 0) return null
  const dist = (s: number | null, d: string | null) => (s === null ? null : d === 'F' ? 'F' as const : 'chi2' as const)
  return {
    page, size, total, sort: 'verdict-change',
    rows: rows.rows.map((r) => ({
      id: r.id, line: r.line, at: r.at, to: r.to,
      a: r.inA ? { statistic: r.sA, critical: r.cA, distribution: dist(r.sA, r.dA), verdict: r.vA! } : null,
      b: r.inB ? { statistic: r.sB, critical: r.cB, distribution: dist(r.sB, r.dB), verdict: r.vB! } : null,
      change: r.change,
    })),
  }
}

export async function compareRuns(firmId: number, a: Adjustment, b: Adjustment, q: CompareQuery) {
  const db = useDb()
  const offset = (q.page - 1) * q.size
  const shifts = db.execute<ShiftRow & { total: number }>(sql`
    with pairs as (
      select coalesce(y.name, x.name) as name, y.east - x.east as "dE", y.north - x.north as "dN", y.height - x.height as "dH",
        y.name is null as "onlyA", x.name is null as "onlyB"
      from (select * from adjusted_stations where ${runScope(firmId, a.id)}) x
      full join (select * from adjusted_stations where ${runScope(firmId, b.id)}) y on x.name = y.name)
    select *, sqrt("dE" * "dE" + "dN" * "dN") as horiz, count(*) over ()::int as total from pairs
    order by horiz desc nulls last, name collate "tiepoint_natural" limit ${q.size} offset ${offset}`)
  const changed = (pred: string) => {
    const onlyIn = (p: Adjustment, other: Adjustment) => db.execute<ChangedObservation & { total: number }>(sql`
      select x.observation_id as id, x.line, x.kind, x.component, x.at, x."from", x."to", count(*) over ()::int as total
      from observation_results x where x.firm_id = ${firmId} and x.adjustment_id = ${p.id} and ${sql.raw(pred.replaceAll('$', 'x.'))}
        and not exists (select 1 from observation_results y where y.firm_id = ${firmId} and y.adjustment_id = ${other.id}
          and ${sql.raw(SAME_OBSERVATION)} and ${sql.raw(pred.replaceAll('$', 'y.'))})
      order by x.line, x.id limit ${CHANGE_LIMIT}`)
    return Promise.all([onlyIn(b, a), onlyIn(a, b)])
  }
  const [st, [flagAdded, flagRemoved], [exclAdded, exclRemoved], vectors] = await Promise.all([
    shifts,
    changed('(not $excluded and ($flagged or $tau_flagged))'),
    changed('$excluded'),
    compareVectors(firmId, a, b, q.vpage, q.size),
  ])
  const list = (res: { rows: (ChangedObservation & { total: number })[] }) => ({
    total: res.rows[0]?.total ?? 0,
    rows: res.rows.map(({ total: _t, ...o }) => o),
  })
  return {
    stations: { page: q.page, size: q.size, total: st.rows[0]?.total ?? (q.page === 1 ? 0 : await countShiftRows(firmId, a.id, b.id)), rows: st.rows.map(({ total: _t, ...r }) => r) },
    flags: { added: list(flagAdded), removed: list(flagRemoved) },
    exclusions: { added: list(exclAdded), removed: list(exclRemoved) },
    /** the GNSS vectors' whole-vector tests in both runs, by page; null when neither run holds a vector */
    vectors,
  }
}

async function countShiftRows(firmId: number, a: number, b: number): Promise<number> {
  const res = await useDb().execute<{ n: number }>(sql`select count(distinct name)::int as n from adjusted_stations where firm_id = ${firmId} and adjustment_id in (${a}, ${b})`)
  return res.rows[0]?.n ?? 0
}

// ── CSV streamed out of COPY TO STDOUT ──────────────────────────────────────

/**
 * The CSV of one run straight from PostgreSQL: COPY (SELECT …) TO STDOUT in
 * CSV format, formatted in SQL (project units, fixed decimals), piped to the
 * response behind the comment lines. Only numbers from the database are put
 * into the COPY text (COPY takes no bind parameters).
 */
export async function csvStream(run: Adjustment, project: { name: string; units: 'm' | 'ft' | 'usft'; precisionUnit?: PrecisionUnit }, what: 'coordinates' | 'residuals'): Promise<Readable> {
  const firmId = Number(run.firmId)
  const runId = Number(run.id)
  const u = project.units
  const k = Number(METRES_PER[u])
  const fixed = (col: string, d: number, scale = `/ ${k}`) => `round((${col} ${scale})::numeric, ${d})::text`
  // precisions by the project's one rule (shared/precision.ts), two decimals more than on screen
  const ps = precisionScale(u, project.precisionUnit)
  const p = ps.key
  const prec = (col: string) => fixed(col, ps.decimals + 2, `* ${Number(ps.perMetre)}`)
  let query: string
  let header: string
  if (what === 'coordinates') {
    const conf = Number((run.settings as { confidence?: number }).confidence ?? 0.95)
    const pct = Math.round(conf * 1000) / 10
    header = ['station', 'kind', 'held', `east_${u}`, `north_${u}`, `height_${u}`, `sd_east_${p}`, `sd_north_${p}`, `sd_height_${p}`,
      `ellipse_semi_major_1sigma_${p}`, `ellipse_semi_minor_1sigma_${p}`, 'ellipse_azimuth_deg', `ellipse_semi_major_${pct}pct_${p}`, `ellipse_semi_minor_${pct}pct_${p}`].join(',')
    query = `select ${safeCellSql('name')}, kind, case when fixed then 'fixed' else '' end, ${fixed('east', 4)}, ${fixed('north', 4)}, ${fixed('height', 4)},
      ${prec('sd_east')}, ${prec('sd_north')}, ${prec('sd_height')}, ${prec('semi_major')}, ${prec('semi_minor')},
      case when semi_major is null then null else round(azimuth_deg::numeric, 2)::text end, ${prec('semi_major95')}, ${prec('semi_minor95')}
      from adjusted_stations where firm_id = ${firmId} and adjustment_id = ${runId} order by name collate "${NATURAL_COLLATION}", id`
  } else {
    // component and the whole-vector test come last, so the columns before them read as they always did
    header = 'line,kind,at,from,to,residual,residual_unit,redundancy,w,tau,mdb,flagged,weak,excluded,component,vector_statistic,vector_critical,vector_flagged,vector_residual_e_mm,vector_residual_n_mm,vector_residual_u_mm'
    const nat = `* ${NATURAL}`
    query = `select line, kind, ${safeCellSql('at')}, ${safeCellSql('"from"')}, ${safeCellSql('"to"')}, ${fixed('residual', 2, nat)}, case when residual_unit = 'm' then 'mm' else 'arcsec' end,
      round(redundancy::numeric, 3)::text, round(w::numeric, 2)::text, round(tau::numeric, 2)::text, ${fixed('mdb', 2, nat)},
      case when flagged then 'yes' else 'no' end, case when weak then 'yes' else 'no' end, case when excluded then 'yes' else 'no' end,
      component, round(vector_statistic::numeric, 2)::text, round(vector_critical::numeric, 2)::text,
      case when vector_flagged is null then null when vector_flagged then 'yes' else 'no' end,
      round((residual_e * 1000)::numeric, 2)::text, round((residual_n * 1000)::numeric, 2)::text, round((residual_u * 1000)::numeric, 2)::text
      from observation_results where firm_id = ${firmId} and adjustment_id = ${runId} order by id`
  }
  const head = [`# Tiepoint run ${run.number} of project "${project.name.replace(/[\r\n]+/g, ' ').replace(/"/g, "'")}"; input SHA-256 ${run.inputHash}`,
    ...(what === 'coordinates' ? [`# coordinates in ${u}; precisions (sd_*, ellipse_*) in ${ps.words}`] : []),
    '# Coordinates must be checked against local regulations and licensed practice before use.', header].join('\n') + '\n'
  const client = await usePool().connect()
  const out = new PassThrough()
  let released = false
  const release = (err?: Error) => {
    if (released) return
    released = true
    client.release(err)
  }
  out.write(head)
  const source = client.query(copyTo(`copy (${query}) to stdout with (format csv)`))
  source.on('error', (e) => { release(e); out.destroy(e) })
  source.on('end', () => release())
  out.on('close', () => { if (!released) { source.destroy(); release(new Error('client went away')) } })
  source.pipe(out)
  return out
}
