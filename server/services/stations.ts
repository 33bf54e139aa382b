// Stations and control of a project: list, create, edit (a rename carries
// every observation with it), import control coordinates from a CSV, and the
// helpers an upload uses to create referenced stations and set control values.
// Everything is stored in metres; the app shows project units.
import { and, asc, eq, sql, type AnyColumn } from 'drizzle-orm'
import { NATURAL_COLLATION } from '../../shared/natural-sort'
import Papa from 'papaparse'
import type { StationCreate, StationUpdate } from '../../shared/schemas/fielddata'
import { METRES_PER, clip, parseNumber } from '../engine/io/units'
import type { ControlRecord, ReadIssue } from '../engine/types'
import { useDb } from '../db/client'
import type { Db, Tx } from '../db/client'
import { observations, stations } from '../db/schema'
import type { Project, Station } from '../db/schema'
import { DomainError, notFound } from '../utils/errors'
import type { FirmContext } from '../utils/guard'
import { audit } from './audit'

export interface StationDto {
  id: number
  name: string
  description: string
  kind: Station['kind']
  approxEast: number | null
  approxNorth: number | null
  approxHeight: number | null
  controlEast: number | null
  controlNorth: number | null
  controlHeight: number | null
  sdEast: number | null
  sdNorth: number | null
  sdHeight: number | null
  /** how the control is held: fixed (no σ), weighted (σ given), or none */
  horizontal: 'fixed' | 'weighted' | 'none'
  vertical: 'fixed' | 'weighted' | 'none'
  observationCount?: number
  updatedAt: string
}

export function stationDto(s: Station, observationCount?: number): StationDto {
  return {
    id: s.id,
    name: s.name,
    description: s.description,
    kind: s.kind,
    approxEast: s.approxEast,
    approxNorth: s.approxNorth,
    approxHeight: s.approxHeight,
    controlEast: s.controlEast,
    controlNorth: s.controlNorth,
    controlHeight: s.controlHeight,
    sdEast: s.sdEast,
    sdNorth: s.sdNorth,
    sdHeight: s.sdHeight,
    horizontal: s.controlEast === null ? 'none' : s.sdEast === null ? 'fixed' : 'weighted',
    vertical: s.controlHeight === null ? 'none' : s.sdHeight === null ? 'fixed' : 'weighted',
    ...(observationCount === undefined ? {} : { observationCount }),
    updatedAt: s.updatedAt.toISOString(),
  }
}

/** a station-name column in natural order, KF2 before KF10 (migration 0007, shared/natural-sort.ts) */
export const natural = (column: AnyColumn) => sql`${column} collate ${sql.identifier(NATURAL_COLLATION)}`

export async function listStations(ctx: FirmContext, project: Project): Promise<StationDto[]> {
  const rows = await useDb().select({
    station: stations,
    // Qualified by hand: without a join drizzle renders ${stations.x} unqualified, which the subquery would bind to o.
    n: sql<number>`(select count(*)::int from ${observations} o where o.firm_id = "stations"."firm_id" and o.project_id = "stations"."project_id"
      and (o.at = "stations"."name" or o.to = "stations"."name" or o."from" = "stations"."name"))`,
  }).from(stations)
    .where(and(eq(stations.firmId, ctx.firm.id), eq(stations.projectId, project.id)))
    .orderBy(natural(stations.name), asc(stations.id))
  return rows.map((r) => stationDto(r.station, r.n))
}

async function findStation(db: Db | Tx, ctx: FirmContext, project: Project, id: number): Promise<Station> {
  const [s] = await db.select().from(stations)
    .where(and(eq(stations.firmId, ctx.firm.id), eq(stations.projectId, project.id), eq(stations.id, id))).limit(1)
  if (!s) throw notFound('No such station')
  return s
}

async function nameTaken(db: Db | Tx, ctx: FirmContext, project: Project, name: string): Promise<boolean> {
  const [s] = await db.select({ id: stations.id }).from(stations)
    .where(and(eq(stations.firmId, ctx.firm.id), eq(stations.projectId, project.id), eq(stations.name, name))).limit(1)
  return !!s
}

/** Control values imply kind 'control' unless the caller says otherwise. */
function impliedKind(b: StationUpdate, current?: Station): 'control' | 'new' {
  if (b.kind) return b.kind
  const hasControl = (b.controlEast ?? current?.controlEast ?? null) !== null || (b.controlHeight ?? current?.controlHeight ?? null) !== null
  return hasControl ? 'control' : (current?.kind ?? 'new')
}

export async function createStation(ctx: FirmContext, project: Project, body: StationCreate): Promise<StationDto> {
  return useDb().transaction(async (tx) => {
    if (await nameTaken(tx, ctx, project, body.name)) {
      throw new DomainError('conflict', `A station named '${body.name}' already exists in this project`)
    }
    const [s] = await tx.insert(stations).values({
      firmId: ctx.firm.id,
      projectId: project.id,
      ...body,
      description: body.description ?? '',
      kind: impliedKind(body),
    }).returning()
    await audit(tx, { firmId: ctx.firm.id, userId: ctx.user.id, action: 'station.create', entityType: 'station', entityId: s!.id, projectId: project.id, after: stationDto(s!) })
    return stationDto(s!)
  })
}

/** Edits a station; a new name is carried into every observation that used the old one, in the same transaction. */
export async function updateStation(ctx: FirmContext, project: Project, id: number, body: StationUpdate): Promise<StationDto & { renamedObservations: number }> {
  return useDb().transaction(async (tx) => {
    const before = await findStation(tx, ctx, project, id)
    let renamed = 0
    if (body.name !== undefined && body.name !== before.name) {
      if (await nameTaken(tx, ctx, project, body.name)) {
        throw new DomainError('conflict', `A station named '${body.name}' already exists in this project`)
      }
      const scope = and(eq(observations.firmId, ctx.firm.id), eq(observations.projectId, project.id))
      const r1 = await tx.update(observations).set({ at: body.name }).where(and(scope, eq(observations.at, before.name)))
      const r2 = await tx.update(observations).set({ from: body.name }).where(and(scope, eq(observations.from, before.name)))
      const r3 = await tx.update(observations).set({ to: body.name }).where(and(scope, eq(observations.to, before.name)))
      renamed = (r1.rowCount ?? 0) + (r2.rowCount ?? 0) + (r3.rowCount ?? 0)
    }
    const merged = { ...before, ...body }
    if ((merged.controlEast === null) !== (merged.controlNorth === null)) {
      throw new DomainError('invalid', 'Some fields are not valid', [{ field: 'controlNorth', message: 'give control east and north together' }])
    }
    const [s] = await tx.update(stations).set({ ...body, kind: impliedKind(body, before) })
      .where(and(eq(stations.firmId, ctx.firm.id), eq(stations.id, id))).returning()
    await audit(tx, {
      firmId: ctx.firm.id, userId: ctx.user.id, action: body.name && body.name !== before.name ? 'station.rename' : 'station.update',
      entityType: 'station', entityId: id, projectId: project.id,
      before: stationDto(before), after: { ...stationDto(s!), renamedObservations: renamed },
    })
    return { ...stationDto(s!), renamedObservations: renamed }
  })
}

export async function deleteStation(ctx: FirmContext, project: Project, id: number): Promise<void> {
  await useDb().transaction(async (tx) => {
    const before = await findStation(tx, ctx, project, id)
    const [used] = await tx.select({ n: sql<number>`count(*)::int` }).from(observations)
      .where(and(eq(observations.firmId, ctx.firm.id), eq(observations.projectId, project.id),
        sql`(${observations.at} = ${before.name} or ${observations.to} = ${before.name} or ${observations.from} = ${before.name})`))
    if ((used?.n ?? 0) > 0) throw new DomainError('conflict', `Station '${before.name}' is used by ${used!.n} observations; exclude or rename them first`)
    await tx.delete(stations).where(and(eq(stations.firmId, ctx.firm.id), eq(stations.id, id)))
    await audit(tx, { firmId: ctx.firm.id, userId: ctx.user.id, action: 'station.delete', entityType: 'station', entityId: id, projectId: project.id, before: stationDto(before) })
  })
}

// ── used by uploads and control imports ─────────────────────────────────────

/** Creates every named station that does not exist yet, as kind 'new'. Returns how many were created. */
export async function ensureStations(tx: Tx, firmId: number, projectId: number, names: Iterable<string>): Promise<number> {
  const list = [...new Set(names)].filter((n) => n !== '')
  if (list.length === 0) return 0
  const r = await tx.execute(sql`insert into ${stations} (firm_id, project_id, name, kind)
    select ${firmId}, ${projectId}, n, 'new' from unnest(${sql.param(list)}::text[]) as u(n)
    on conflict (firm_id, project_id, name) do nothing`)
  return r.rowCount ?? 0
}

/**
 * Writes control values onto stations (creating them when missing). A record
 * with E N sets the horizontal control; one with H the vertical; a record
 * never clears the other component. Returns the stations' before/after for the audit.
 */
export async function applyControls(tx: Tx, firmId: number, projectId: number, controls: ControlRecord[]): Promise<{ name: string; before: StationDto | null; after: StationDto }[]> {
  const changes: { name: string; before: StationDto | null; after: StationDto }[] = []
  for (const c of controls) {
    const [before] = await tx.select().from(stations)
      .where(and(eq(stations.firmId, firmId), eq(stations.projectId, projectId), eq(stations.name, c.station))).limit(1)
    const patch: Partial<typeof stations.$inferInsert> = { kind: 'control' }
    if (c.east !== null && c.north !== null) Object.assign(patch, { controlEast: c.east, controlNorth: c.north, sdEast: c.sdEast, sdNorth: c.sdNorth })
    if (c.height !== null) Object.assign(patch, { controlHeight: c.height, sdHeight: c.sdHeight })
    let after: Station
    if (before) {
      ;[after] = (await tx.update(stations).set(patch).where(eq(stations.id, before.id)).returning()) as [Station]
    } else {
      ;[after] = (await tx.insert(stations).values({ firmId, projectId, name: c.station, ...patch }).returning()) as [Station]
    }
    changes.push({ name: c.station, before: before ? stationDto(before) : null, after: stationDto(after) })
  }
  return changes
}

// ── control CSV import ──────────────────────────────────────────────────────

/**
 * Reads "name,east,north[,height][,sdEast,sdNorth,sdHeight]" rows. Coordinates
 * are in the project's length unit, σ in millimetres (as in the observation
 * file); a blank σ holds the value fixed. A header row is optional.
 */
export function readControlCsv(text: string, unit: Project['units']): { ok: true; controls: ControlRecord[] } | { ok: false; errors: ReadIssue[] } {
  const clean = (text.charCodeAt(0) === 0xfeff ? text.slice(1) : text).replace(/\r\n?/g, '\n')
  const parsed = Papa.parse<string[]>(clean, { delimiter: ',', skipEmptyLines: false, comments: '#' })
  const errors: ReadIssue[] = []
  const controls: ControlRecord[] = []
  const seen = new Map<string, number>()
  const factor = METRES_PER[unit]
  const COLS = ['name', 'east', 'north', 'height', 'sdEast', 'sdNorth', 'sdHeight'] as const
  // papaparse drops comment rows from data, so line numbers come from its row cursor when it can;
  // we keep it simple by mapping each non-comment line in order.
  const lineNumbers: number[] = []
  clean.split('\n').forEach((l, i) => { if (!l.startsWith('#')) lineNumbers.push(i + 1) })
  for (const e of parsed.errors) {
    if (e.code === 'UndetectableDelimiter') continue
    errors.push({ line: lineNumbers[e.row ?? 0] ?? 1, column: 'row', message: e.message })
  }
  parsed.data.forEach((fields, i) => {
    const line = lineNumbers[i] ?? i + 1
    if (fields.every((f) => f.trim() === '')) return
    const f = fields.map((x) => x.trim())
    if (i === 0 && f[0]!.toLowerCase() === 'name') return // header row
    const err = (column: string, message: string) => errors.push({ line, column, message })
    const before = errors.length
    if (f.length < 3) { err('row', `has ${f.length} fields: write name,east,north[,height][,sdEast,sdNorth,sdHeight]`); return }
    if (f.length > 7) { err('row', `has ${f.length} fields; at most 7 (name,east,north,height,sdEast,sdNorth,sdHeight)`); return }
    const name = f[0]!
    if (name === '') err('name', 'is blank')
    else if (name.length > 100) err('name', 'is longer than 100 characters')
    const nums: (number | null)[] = []
    for (let c = 1; c < 7; c++) {
      const t = f[c] ?? ''
      if (t === '') { nums.push(null); continue }
      const p = parseNumber(t)
      if (!p.ok) { err(COLS[c]!, p.message); nums.push(null); continue }
      if (c <= 3 && Math.abs(p.value * factor) > 1e8) { err(COLS[c]!, `'${clip(t)}' is too large for a coordinate`); nums.push(null); continue }
      if (c >= 4 && !(p.value > 0)) { err(COLS[c]!, `'${clip(t)}' must be positive (leave it blank to hold the value fixed)`); nums.push(null); continue }
      nums.push(p.value)
    }
    if ((f[1] ?? '') === '') err('east', 'is blank')
    if ((f[2] ?? '') === '') err('north', 'is blank')
    if ((nums[3] === null) !== (nums[4] === null)) err('sdNorth', 'give sdEast and sdNorth together (or neither, to hold E N fixed)')
    if (nums[5] !== null && nums[2] === null) err('sdHeight', 'is given but the row has no height')
    if (name && seen.has(name)) err('name', `station '${clip(name)}' already appears on line ${seen.get(name)}`)
    if (errors.length > before) return
    seen.set(name, line)
    controls.push({
      line,
      station: name,
      east: nums[0]! * factor,
      north: nums[1]! * factor,
      height: nums[2] === null ? null : nums[2]! * factor,
      sdEast: nums[3] === null ? null : nums[3]! / 1000,
      sdNorth: nums[4] === null ? null : nums[4]! / 1000,
      sdHeight: nums[5] === null ? null : nums[5]! / 1000,
    })
  })
  if (errors.length) return { ok: false, errors }
  if (controls.length === 0) return { ok: false, errors: [{ line: 1, column: 'file', message: 'holds no control rows (name,east,north[,height][,sdEast,sdNorth,sdHeight])' }] }
  return { ok: true, controls }
}

/** Imports control coordinates all-or-nothing: any bad line answers 422 listing every one, nothing written. */
export async function importControlCsv(ctx: FirmContext, project: Project, text: string): Promise<{ created: number; updated: number; stations: StationDto[] }> {
  const read = readControlCsv(text, project.units)
  if (!read.ok) {
    const lines = new Set(read.errors.map((e) => e.line)).size
    throw new DomainError('invalid', `The control file has ${lines} bad line${lines === 1 ? '' : 's'}; nothing was saved`, read.errors)
  }
  return useDb().transaction(async (tx) => {
    const changes = await applyControls(tx, ctx.firm.id, project.id, read.controls)
    await audit(tx, {
      firmId: ctx.firm.id, userId: ctx.user.id, action: 'station.import_control', entityType: 'project', entityId: project.id, projectId: project.id,
      before: changes.map((c) => c.before), after: changes.map((c) => c.after),
    })
    return {
      created: changes.filter((c) => !c.before).length,
      updated: changes.filter((c) => c.before).length,
      stations: changes.map((c) => c.after),
    }
  })
}

/** POST semantics of the stations route: create, or update the control of the station with that name. */
export async function upsertStation(ctx: FirmContext, project: Project, body: StationCreate): Promise<{ created: boolean; station: StationDto }> {
  const [existing] = await useDb().select({ id: stations.id }).from(stations)
    .where(and(eq(stations.firmId, ctx.firm.id), eq(stations.projectId, project.id), eq(stations.name, body.name))).limit(1)
  if (!existing) return { created: true, station: await createStation(ctx, project, body) }
  const { renamedObservations: _, ...station } = await updateStation(ctx, project, existing.id, body)
  return { created: false, station }
}
