// Observation sets and observations: upload a file (Tiepoint CSV or LandXML
// 1.2), keep its bytes with their SHA-256 as the legal record, store every
// observation with its source line, list and page them, edit or exclude one
// (the file never changes; originalValue keeps what it said), and type rows in
// by hand. Uploads are all-or-nothing in one transaction.
import { isUtf8 } from 'node:buffer'
import { createHash } from 'node:crypto'
import { and, asc, desc, eq, ilike, inArray, or, sql } from 'drizzle-orm'
import type { SQL } from 'drizzle-orm'
import Papa from 'papaparse'
import { CHIEFS } from '../../shared/roles'
import type { ManualObservations, ObservationPatch, ObservationQuery } from '../../shared/schemas/fielddata'
import { readObservationCsv, readObservationCsvBatches } from '../engine/io/csv'
import { readLandXmlBatches } from '../engine/io/landxml'
import { RAD_PER_ARCSEC, formatDms, formatGon, formatLength, parseAngle, parseLength } from '../engine/io/units'
import { aprioriSigma } from '../engine/models/registry'
import { formatPrecision, precisionScale } from '../../shared/precision'
import type { BaselineVector, ControlRecord, InstrumentProfile, ObservationRecord, ReadEnd, ReadIssue, ReadResult, RecordBatches } from '../engine/types'
import { useDb } from '../db/client'
import { chunked, copyInto, copyNumber, copyText } from '../db/copy'
import type { Tx } from '../db/client'
import { crewMembers, crews, instrumentProfiles, observationSets, observations, projectCrews, stations, users } from '../db/schema'
import type { ObservationRow, ObservationSetRow, Project } from '../db/schema'
import { DomainError, notFound } from '../utils/errors'
import type { FirmContext } from '../utils/guard'
import { audit } from './audit'
import { applyControls, ensureStations, natural } from './stations'

/** Upload limits (also shown on the page). */
export const MAX_UPLOAD_BYTES = 20 * 1024 * 1024
export const MAX_UPLOAD_LINES = 200_000

const ANGLE_KINDS = new Set(['direction', 'angle', 'zenith', 'azimuth'])

export type FileFormat = ObservationSetRow['format']

export interface UploadInput {
  name: string
  bytes: Buffer
  crewId?: number | null
  instrumentProfileId?: number | null
  /** forces the format (manual entry); otherwise detected from the name and content */
  format?: FileFormat
}

export interface UploadResult {
  id: number
  name: string
  format: FileFormat
  sha256: string
  observations: number
  controls: number
  stationsCreated: number
  warnings: ReadIssue[]
}

export interface ObservationSetDto {
  id: number
  name: string
  format: FileFormat
  sizeBytes: number
  sha256: string
  crew: { id: number; name: string } | null
  instrumentProfile: { id: number; name: string } | null
  uploadedBy: { id: number; name: string } | null
  uploadedAt: string
  observations: number
  excluded: number
  parseReport: Record<string, unknown>
}

/** CSV unless the name says .xml or the content starts like XML. */
export function detectFormat(name: string, text: string): 'csv' | 'landxml' {
  const lower = name.toLowerCase()
  if (lower.endsWith('.xml') || lower.endsWith('.landxml')) return 'landxml'
  if (lower.endsWith('.csv') || lower.endsWith('.txt')) return 'csv'
  const head = text.replace(/^\uFEFF/, '').trimStart().slice(0, 200)
  return head.startsWith('<?xml') || head.startsWith('<LandXML') ? 'landxml' : 'csv'
}

function countLines(text: string): number {
  let n = 0
  for (let i = text.indexOf('\n'); i !== -1; i = text.indexOf('\n', i + 1)) n++
  return text.length > 0 && !text.endsWith('\n') ? n + 1 : n
}

/** Lines of UTF-8 bytes, counted like countLines without decoding them. */
function countByteLines(bytes: Uint8Array): number {
  let n = 0
  for (let i = bytes.indexOf(0x0a); i !== -1; i = bytes.indexOf(0x0a, i + 1)) n++
  return bytes.length > 0 && bytes[bytes.length - 1] !== 0x0a ? n + 1 : n
}

/**
 * Checks that an upload is UTF-8 text without decoding it (the LandXML reader
 * decodes it slice by slice), or refuses it, naming the line of the first
 * byte that is not UTF-8.
 */
function checkUtf8(bytes: Buffer): void {
  if (isUtf8(bytes)) return
  const loose = new TextDecoder('utf-8').decode(bytes)
  const at = loose.indexOf('\uFFFD')
  const line = at < 0 ? 1 : countLines(loose.slice(0, at + 1))
  throw new DomainError('invalid', 'The file is not UTF-8 text; nothing was saved', [{ line, column: 'file', message: 'holds bytes that are not UTF-8 (save the file as UTF-8)' }])
}

/** The whole text of a UTF-8 upload (already checked), without its byte-order mark. */
const textOf = (bytes: Buffer) => new TextDecoder('utf-8').decode(bytes)

function profileOf(row: typeof instrumentProfiles.$inferSelect): InstrumentProfile {
  return {
    distanceMm: row.distanceMm,
    distancePpm: row.distancePpm,
    directionArcsec: row.directionArcsec,
    zenithArcsec: row.zenithArcsec,
    centeringInstrumentMm: row.centeringInstrumentMm,
    centeringTargetMm: row.centeringTargetMm,
    levellingMmPerSqrtKm: row.levellingMmPerSqrtKm,
  }
}

async function loadProfile(ctx: FirmContext, id: number | null | undefined) {
  if (id === null || id === undefined) return null
  const [p] = await useDb().select().from(instrumentProfiles)
    .where(and(eq(instrumentProfiles.firmId, ctx.firm.id), eq(instrumentProfiles.id, id))).limit(1)
  if (!p) throw new DomainError('invalid', 'Some fields are not valid', [{ field: 'instrumentProfileId', message: 'instrumentProfileId: no such instrument profile in this firm' }])
  return p
}

/** The crew named by the upload, or (for field crew who name none) their crew on this project. */
async function resolveCrew(ctx: FirmContext, project: Project, id: number | null | undefined): Promise<number | null> {
  const db = useDb()
  if (id !== null && id !== undefined) {
    const [c] = await db.select({ id: crews.id }).from(crews).where(and(eq(crews.firmId, ctx.firm.id), eq(crews.id, id))).limit(1)
    if (!c) throw new DomainError('invalid', 'Some fields are not valid', [{ field: 'crewId', message: 'crewId: no such crew in this firm' }])
    return c.id
  }
  if (ctx.role !== 'field_crew') return null
  const [mine] = await db.select({ id: projectCrews.crewId }).from(projectCrews)
    .innerJoin(crewMembers, and(eq(crewMembers.crewId, projectCrews.crewId), eq(crewMembers.firmId, ctx.firm.id)))
    .where(and(eq(projectCrews.firmId, ctx.firm.id), eq(projectCrews.projectId, project.id), eq(crewMembers.userId, ctx.user.id))).limit(1)
  return mine?.id ?? null
}

function refuse(read: Extract<ReadResult, { ok: false }>, what = 'The file'): never {
  const lines = new Set(read.errors.map((e) => e.line)).size
  throw new DomainError('invalid', `${what} has ${lines} bad line${lines === 1 ? '' : 's'}; nothing was saved. Fix every line listed and upload again.`,
    read.errors.map((e) => ({ line: e.line, column: e.column, message: e.message })), { warnings: read.warnings })
}

// COPY text format: the encoders and the transaction's client are in server/db/copy.ts.
const COPY_COLUMNS = 'firm_id, project_id, set_id, line, kind, at, "from", "to", value, unit, sigma, hi, ht, set_name, length_km, note, excluded, original_value, vector'

/** The unit stored beside the SI value: the one the file used, else the SI unit. */
function storedUnit(r: ObservationRecord): string {
  return r.unit ?? (ANGLE_KINDS.has(r.kind) ? 'rad' : 'm')
}

/** One observation as a line of COPY text. */
function copyLine(head: string, r: ObservationRecord): string {
  const value = copyNumber(r.value)
  return head + r.line + '\t' + r.kind + '\t' + copyText(r.at) + '\t' + copyText(r.from) + '\t' + copyText(r.to) + '\t'
    + value + '\t' + copyText(storedUnit(r)) + '\t' + copyNumber(r.sigma) + '\t' + copyNumber(r.hi) + '\t' + copyNumber(r.ht) + '\t'
    + copyText(r.set) + '\t' + copyNumber(r.lengthKm) + '\t' + copyText(r.note ?? '') + '\t' + (r.excluded ? 't' : 'f') + '\t' + value + '\t'
    + copyText(r.vector ? JSON.stringify(r.vector) : null) + '\n'
}

/**
 * Stores the observations of one set with COPY FROM STDIN on the
 * transaction's own connection, so a failure anywhere still rolls back the
 * set, stations and audit row with it. Rows are made in chunks as the server
 * takes them (the stream's back-pressure), never as one big string; with a
 * batched reader the file is read only as fast as the rows are stored.
 */
async function insertObservations(tx: Tx, firmId: number, projectId: number, setId: number, recs: Iterable<ObservationRecord>): Promise<void> {
  const head = `${firmId}\t${projectId}\t${setId}\t`
  await copyInto(tx, 'observations', COPY_COLUMNS, chunked(recs, (r) => copyLine(head, r)))
}

/**
 * PostgreSQL text cannot hold the NUL character (U+0000), so a name or note
 * carrying one would fail in the database; it is refused instead, with its
 * line and column, like any other bad cell.
 */
function nulIn(issues: ReadIssue[], line: number, cells: Array<[string, string | null | undefined]>): void {
  for (const [column, v] of cells) {
    if (v && v.includes('\u0000')) issues.push({ line, column, message: 'holds a NUL character (U+0000), which cannot be stored; remove it' })
  }
}

/**
 * Held coordinates change only by a party chief, a licensed surveyor or the
 * owner (CHIEFS): a field crew's file that carries control (CSV `control`
 * rows, LandXML CgPoints with pntSurv="control") is refused, naming each line,
 * and nothing is saved. The crew uploads the measurements; the chief sets the
 * control on the Stations tab or uploads it.
 */
function controlFromCrew(ctx: FirmContext, controls: ControlRecord[], format: FileFormat): ReadIssue[] {
  if (CHIEFS.includes(ctx.role)) return []
  return controls.map((c) => ({
    line: c.line,
    column: format === 'landxml' ? 'CgPoint@pntSurv' : 'kind',
    message: `sets the held coordinates of control point '${c.station}'; only a party chief or licensed surveyor may set control. Remove the control ${format === 'landxml' ? 'CgPoint' : 'row'} and ask a party chief to enter it`,
  }))
}

/**
 * A GNSS vector lives in the Earth-centred frame of a datum; a local plane has
 * none, so the vector cannot be tied to the plane's coordinates. Each vector
 * row is refused, naming its line, and nothing is written.
 */
function vectorInLocalPlane(line: number, format: FileFormat): ReadIssue {
  return {
    line,
    column: format === 'landxml' ? 'GPSVector' : 'kind',
    message: 'a GNSS baseline needs a georeferenced project: choose a projected CRS (EPSG) and set the geoid separation N in the project settings; this project uses a local plane',
  }
}

/**
 * Watches the records of an upload on their way to the database and keeps
 * what is checked once the file is read: the count, the station names, the
 * first vector, and the records that cannot be stored. Once the reader or a
 * check has found a problem no more records are passed on (the transaction
 * is rolled back anyway), but the reading goes on so that every bad line is
 * listed.
 */
class UploadScan {
  count = 0
  names = new Set<string>()
  firstVector: ObservationRecord | null = null
  /** cells holding NUL, and vectors in a local-plane project */
  nul: ReadIssue[] = []
  vectors: ReadIssue[] = []
  end: ReadEnd | null = null

  constructor(private project: Project, private format: FileFormat) {}

  *records(batches: RecordBatches): Generator<ObservationRecord> {
    for (;;) {
      const step = batches.next()
      if (step.done) {
        this.end = step.value
        return
      }
      for (const o of step.value) {
        this.count++
        this.names.add(o.at); this.names.add(o.to); if (o.from) this.names.add(o.from)
        nulIn(this.nul, o.line, [['at', o.at], ['from', o.from], ['to', o.to], ['set', o.set], ['note', o.note]])
        if (o.kind === 'gnss_baseline') {
          this.firstVector ??= o
          if (this.project.crs === 'local') this.vectors.push(vectorInLocalPlane(o.line, this.format))
        }
        if (this.nul.length === 0 && this.vectors.length === 0) yield o
      }
    }
  }
}

/**
 * Parses and stores one file. Any bad line → 422 listing every one; the same
 * bytes already in the project → 409 naming the earlier set; nothing is
 * written unless everything is.
 *
 * The file is read while its rows are stored: records go from the reader to
 * the COPY in batches inside the transaction, so a large file never has all
 * its records in memory (nor, for LandXML, its whole decoded text). A bad line
 * found part-way rolls the transaction back, so nothing is written then either.
 */
export async function uploadObservationSet(ctx: FirmContext, project: Project, input: UploadInput): Promise<UploadResult> {
  const { bytes } = input
  if (bytes.length === 0) throw new DomainError('invalid', 'The file is empty; nothing was saved', [{ line: 1, column: 'file', message: 'the file is empty' }])
  if (bytes.length > MAX_UPLOAD_BYTES) throw tooLarge()
  const lines = countByteLines(bytes)
  if (lines > MAX_UPLOAD_LINES) {
    throw new DomainError('too_large', `The file has ${lines.toLocaleString('en')} lines; the limit is ${MAX_UPLOAD_LINES.toLocaleString('en')} lines per upload. Split it into several files.`)
  }
  checkUtf8(bytes)
  const sha256 = createHash('sha256').update(bytes).digest('hex')
  const db = useDb()
  const earlier = await findBySha(ctx, project, sha256)
  if (earlier) throw duplicate(earlier)

  const profileRow = await loadProfile(ctx, input.instrumentProfileId)
  const crewId = await resolveCrew(ctx, project, input.crewId)
  const format: FileFormat = input.format ?? detectFormat(input.name, textOf(bytes.subarray(0, 400)))

  try {
    return await db.transaction(async (tx) => {
      const [set] = await tx.insert(observationSets).values({
        firmId: ctx.firm.id,
        projectId: project.id,
        name: input.name,
        format,
        content: bytes,
        sizeBytes: bytes.length,
        sha256,
        crewId,
        instrumentProfileId: profileRow?.id ?? null,
        uploadedBy: ctx.user.id,
        parseReport: {},
      }).returning({ id: observationSets.id })
      const batches = format === 'landxml'
        ? readLandXmlBatches(bytes)
        : readObservationCsvBatches(textOf(bytes), { heightUnit: project.units, ...(profileRow ? { profile: profileOf(profileRow) } : {}) })
      const scan = new UploadScan(project, format)
      await insertObservations(tx, ctx.firm.id, project.id, set!.id, scan.records(batches))
      // Every refusal below throws inside the transaction: the set and its rows go with it.
      const read = scan.end
      if (!read) throw new Error('the file was not read to its end')
      if (!read.ok) refuse(read)
      // cells that cannot be stored, control set by field crew, vectors in a local plane: listed together, so one fix does it
      for (const c of read.controls) nulIn(scan.nul, c.line, [['at', c.station]])
      const problems = [...scan.nul, ...controlFromCrew(ctx, read.controls, format), ...scan.vectors]
      if (problems.length > 0) refuse({ ok: false, errors: problems.sort((x, y) => x.line - y.line), warnings: read.warnings })
      if (scan.firstVector && project.geoidSeparationM === 0) {
        // 0 is the setting's default: say so once, since a forgotten N shifts every height by N
        read.warnings.push({ line: scan.firstVector.line, column: 'kind', message: 'the project\'s geoid separation N is 0 m (the default): vectors tie heights through ellipsoidal heights h = H + N, so set the site\'s N in the project settings before adjusting' })
      }

      const parseReport = { lines, observations: scan.count, controls: read.controls.length, warnings: read.warnings.slice(0, 500), warningCount: read.warnings.length }
      await tx.update(observationSets).set({ parseReport }).where(and(eq(observationSets.firmId, ctx.firm.id), eq(observationSets.id, set!.id)))
      const controlChanges = await applyControls(tx, ctx.firm.id, project.id, read.controls)
      const created = await ensureStations(tx, ctx.firm.id, project.id, scan.names)
      await audit(tx, {
        firmId: ctx.firm.id, userId: ctx.user.id, action: 'observation_set.upload', entityType: 'observation_set', entityId: set!.id, projectId: project.id,
        after: { name: input.name, format, sha256, sizeBytes: bytes.length, observations: scan.count, controls: read.controls.length, stationsCreated: created, crewId, instrumentProfileId: profileRow?.id ?? null },
        ...(controlChanges.length ? { before: { controls: controlChanges.map((c) => c.before) } } : {}),
      })
      return { id: set!.id, name: input.name, format, sha256, observations: scan.count, controls: read.controls.length, stationsCreated: created, warnings: read.warnings }
    })
  } catch (error) {
    // Two uploads of the same bytes at once: the unique index decides.
    if (isUniqueViolation(error)) {
      const winner = await findBySha(ctx, project, sha256)
      if (winner) throw duplicate(winner)
    }
    throw error
  }
}

export const tooLarge = () => new DomainError('too_large', `The file is larger than ${MAX_UPLOAD_BYTES / 1024 / 1024} MB, the limit per upload. Split it into several files.`)

function isUniqueViolation(e: unknown): boolean {
  const code = (e as { code?: string; cause?: { code?: string } })?.code ?? (e as { cause?: { code?: string } })?.cause?.code
  return code === '23505'
}

async function findBySha(ctx: FirmContext, project: Project, sha256: string) {
  const [row] = await useDb().select({ id: observationSets.id, name: observationSets.name, uploadedAt: observationSets.uploadedAt }).from(observationSets)
    .where(and(eq(observationSets.firmId, ctx.firm.id), eq(observationSets.projectId, project.id), eq(observationSets.sha256, sha256))).limit(1)
  return row
}

function duplicate(earlier: { id: number; name: string; uploadedAt: Date }) {
  return new DomainError('conflict', `This file was already uploaded as set ${earlier.id} '${earlier.name}' on ${earlier.uploadedAt.toISOString().slice(0, 16).replace('T', ' ')} UTC; nothing was saved.`,
    undefined, { existingSetId: earlier.id, existingName: earlier.name })
}

// ── typed-in rows ───────────────────────────────────────────────────────────

const MANUAL_COLUMNS = ['kind', 'at', 'from', 'to', 'value', 'unit', 'sigma', 'hi', 'ht', 'set', 'length', 'note', 'correlation'] as const

/**
 * Rows typed into the grid go through the same reader as a file: they are
 * written as CSV (header on line 1, row i on line i + 1) and stored as a
 * 'manual' set, so the record of what was typed is kept like any upload.
 * Errors name the grid row (line − 1) as well as the column.
 */
export async function addManualObservations(ctx: FirmContext, project: Project, body: ManualObservations): Promise<UploadResult> {
  const csv = Papa.unparse({ fields: [...MANUAL_COLUMNS], data: body.rows.map((r) => MANUAL_COLUMNS.map((c) => r[c])) }, { newline: '\n', quotes: false })
  // The trailing comment makes every typed-in set unique (two people may type the same rows).
  const text = `${csv}\n# typed in by ${ctx.user.email} at ${new Date().toISOString()}\n`
  const profileRow = await loadProfile(ctx, body.instrumentProfileId)
  const read = readObservationCsv(text, { heightUnit: project.units, ...(profileRow ? { profile: profileOf(profileRow) } : {}) })
  if (!read.ok) {
    throw new DomainError('invalid', `${new Set(read.errors.map((e) => e.line)).size} typed-in row(s) are not valid; nothing was saved`,
      read.errors.map((e) => ({ line: e.line, column: e.column, field: `rows.${e.line - 2}.${e.column}`, message: `row ${e.line - 1}, ${e.column}: ${e.message}` })))
  }
  const control = controlFromCrew(ctx, read.controls, 'manual')
  if (control.length) {
    throw new DomainError('invalid', `${control.length} typed-in row(s) set control; nothing was saved`,
      control.map((e) => ({ line: e.line, column: e.column, field: `rows.${e.line - 2}.kind`, message: `row ${e.line - 1}, kind: ${e.message}` })))
  }
  const name = `Typed in by ${ctx.user.name}, ${new Date().toISOString().slice(0, 16).replace('T', ' ')} UTC`
  return uploadObservationSet(ctx, project, { name, bytes: Buffer.from(text, 'utf8'), format: 'manual', crewId: body.crewId, instrumentProfileId: body.instrumentProfileId })
}

// ── listing and the original file ───────────────────────────────────────────

export async function listObservationSets(ctx: FirmContext, project: Project): Promise<ObservationSetDto[]> {
  const rows = await useDb().select({
    id: observationSets.id, name: observationSets.name, format: observationSets.format, sizeBytes: observationSets.sizeBytes,
    sha256: observationSets.sha256, uploadedAt: observationSets.uploadedAt, parseReport: observationSets.parseReport,
    crewId: crews.id, crewName: crews.name, profileId: instrumentProfiles.id, profileName: instrumentProfiles.name,
    userId: users.id, userName: users.name,
    n: sql<number>`(select count(*)::int from ${observations} o where o.firm_id = "observation_sets"."firm_id" and o.set_id = "observation_sets"."id")`,
    nx: sql<number>`(select count(*)::int from ${observations} o where o.firm_id = "observation_sets"."firm_id" and o.set_id = "observation_sets"."id" and o.excluded)`,
  }).from(observationSets)
    .leftJoin(crews, and(eq(crews.id, observationSets.crewId), eq(crews.firmId, ctx.firm.id)))
    .leftJoin(instrumentProfiles, and(eq(instrumentProfiles.id, observationSets.instrumentProfileId), eq(instrumentProfiles.firmId, ctx.firm.id)))
    .leftJoin(users, eq(users.id, observationSets.uploadedBy))
    .where(and(eq(observationSets.firmId, ctx.firm.id), eq(observationSets.projectId, project.id)))
    .orderBy(desc(observationSets.uploadedAt), desc(observationSets.id))
  return rows.map((r) => ({
    id: r.id, name: r.name, format: r.format, sizeBytes: r.sizeBytes, sha256: r.sha256,
    crew: r.crewId ? { id: r.crewId, name: r.crewName! } : null,
    instrumentProfile: r.profileId ? { id: r.profileId, name: r.profileName! } : null,
    uploadedBy: r.userId ? { id: r.userId, name: r.userName! } : null,
    uploadedAt: r.uploadedAt.toISOString(),
    observations: r.n, excluded: r.nx, parseReport: r.parseReport,
  }))
}

export async function getObservationSetFile(ctx: FirmContext, project: Project, setId: number) {
  const [row] = await useDb().select({ name: observationSets.name, format: observationSets.format, content: observationSets.content, sha256: observationSets.sha256 })
    .from(observationSets)
    .where(and(eq(observationSets.firmId, ctx.firm.id), eq(observationSets.projectId, project.id), eq(observationSets.id, setId))).limit(1)
  if (!row) throw notFound('No such observation set')
  await audit(useDb(), { firmId: ctx.firm.id, userId: ctx.user.id, action: 'observation_set.download', entityType: 'observation_set', entityId: setId, projectId: project.id, after: { sha256: row.sha256, role: ctx.role } })
  const contentType = row.format === 'landxml' ? 'application/xml' : 'text/csv; charset=utf-8'
  const ext = row.format === 'landxml' ? '.xml' : '.csv'
  const fileName = /\.[a-z0-9]{1,8}$/i.test(row.name) ? row.name : `${row.name}${ext}`
  return { ...row, contentType, fileName }
}

// ── observations: list, edit ────────────────────────────────────────────────

export interface ObservationDto {
  id: number
  setId: number
  line: number
  kind: ObservationRow['kind']
  at: string
  from: string | null
  to: string
  /** metres or radians */
  value: number
  originalValue: number | null
  edited: boolean
  /** value in the project's units / angle format, number only */
  display: string
  displayUnit: string
  /** σ the adjustment will use (m or rad; the engine's own σ function, centering included), and where it comes from; null when a length it needs is unknown */
  sigmaUsed: number | null
  sigmaDisplay: string
  sigmaSource: 'file' | 'profile' | 'none'
  hi: number | null
  ht: number | null
  setName: string | null
  lengthKm: number | null
  note: string
  excluded: boolean
  /** gnss_baseline rows: ΔX ΔY ΔZ (m), σX σY σZ (m), ρXY ρXZ ρYZ or null; null on other kinds */
  vector: BaselineVector | null
}

/** Formats a value in the project's length unit or angle format (number and unit apart). */
export function formatValue(kind: string, value: number, project: Pick<Project, 'units' | 'angleFormat'>): { text: string; unit: string } {
  if (ANGLE_KINDS.has(kind)) {
    return project.angleFormat === 'gon' ? { text: formatGon(value, 5), unit: 'gon' } : { text: formatDms(value, 1), unit: '' }
  }
  const unit = project.units === 'm' ? 'm' : project.units === 'ft' ? 'ft' : 'US ft'
  return { text: formatLength(value, project.units, 4), unit }
}

/** Horizontal length between two stations from their stored control or approximate positions, or null. */
type LengthOf = (a: string, b: string) => number | null

/**
 * The σ the adjustment will use for the row — the engine's own function
 * (aprioriSigma), with the lengths known from the stored station positions —
 * or null when a length it needs is not known yet.
 */
function sigmaFor(o: ObservationRow, profile: InstrumentProfile | null, lengthOf: LengthOf): { value: number | null; source: ObservationDto['sigmaSource'] } {
  if (o.sigma !== null) return { value: o.sigma, source: 'file' }
  if (!profile) return { value: null, source: 'none' }
  const value = aprioriSigma({ ...o, set: o.setName, sigma: null, vector: o.vector ?? undefined }, { profile, length: lengthOf })
  return value === null ? { value: null, source: 'none' } : { value, source: 'profile' }
}

/**
 * A σ as the run pages show it: lengths in the project's precision unit (mm, or hundredths of its
 * foot: shared/precision.ts), angles in arcseconds or, in gon projects, centesimal seconds
 * (1 gon = 3240″ = 10 000 cc, so cc = ″ · 10 000 / 3240).
 */
function sigmaText(kind: string, sigma: number | null, project: Pick<Project, 'units' | 'angleFormat' | 'precisionUnit'>): string {
  if (sigma === null) return ''
  if (ANGLE_KINDS.has(kind)) {
    const arcsec = sigma / RAD_PER_ARCSEC
    return project.angleFormat === 'gon' ? `${((arcsec * 10_000) / 3240).toFixed(1)} cc` : `${arcsec.toFixed(1)}″`
  }
  const scale = precisionScale(project.units, project.precisionUnit)
  return `${formatPrecision(sigma, scale)} ${scale.label}`
}

/** A vector's three components in metres (its frame's unit, whatever the project's), and its three σ in mm. */
function vectorDisplay(v: BaselineVector): { display: string; sigma: string } {
  const n = (x: number) => x.toFixed(4).replace('-', '−')
  return {
    display: `ΔX ${n(v.d[0])}  ΔY ${n(v.d[1])}  ΔZ ${n(v.d[2])}`,
    sigma: `${v.sigma.map((x) => (x * 1000).toFixed(1)).join(' / ')} mm`,
  }
}

function observationDto(o: ObservationRow, project: Project, profile: InstrumentProfile | null, lengthOf: LengthOf = () => null): ObservationDto {
  if (o.vector) {
    const v = vectorDisplay(o.vector)
    return {
      id: o.id, setId: o.setId, line: o.line, kind: o.kind, at: o.at, from: o.from, to: o.to,
      value: o.value, originalValue: o.originalValue, edited: false,
      display: v.display, displayUnit: 'm',
      sigmaUsed: null, sigmaDisplay: v.sigma, sigmaSource: 'file',
      hi: o.hi, ht: o.ht, setName: o.setName, lengthKm: o.lengthKm, note: o.note, excluded: o.excluded, vector: o.vector,
    }
  }
  const f = formatValue(o.kind, o.value, project)
  const s = sigmaFor(o, profile, lengthOf)
  return {
    id: o.id, setId: o.setId, line: o.line, kind: o.kind, at: o.at, from: o.from, to: o.to,
    value: o.value, originalValue: o.originalValue, edited: o.originalValue !== null && o.originalValue !== o.value,
    display: f.text, displayUnit: f.unit,
    sigmaUsed: s.value, sigmaDisplay: sigmaText(o.kind, s.value, project), sigmaSource: s.source,
    hi: o.hi, ht: o.ht, setName: o.setName, lengthKm: o.lengthKm, note: o.note, excluded: o.excluded, vector: null,
  }
}

async function profilesBySet(ctx: FirmContext, project: Project): Promise<Map<number, InstrumentProfile>> {
  const rows = await useDb().select({ setId: observationSets.id, p: instrumentProfiles }).from(observationSets)
    .innerJoin(instrumentProfiles, and(eq(instrumentProfiles.id, observationSets.instrumentProfileId), eq(instrumentProfiles.firmId, ctx.firm.id)))
    .where(and(eq(observationSets.firmId, ctx.firm.id), eq(observationSets.projectId, project.id)))
  return new Map(rows.map((r) => [r.setId, profileOf(r.p)]))
}

export async function listObservations(ctx: FirmContext, project: Project, q: ObservationQuery) {
  const db = useDb()
  const where: SQL[] = [eq(observations.firmId, ctx.firm.id), eq(observations.projectId, project.id)]
  if (q.setId) where.push(eq(observations.setId, q.setId))
  if (q.kind) where.push(eq(observations.kind, q.kind))
  if (q.excluded) where.push(eq(observations.excluded, q.excluded === 'true'))
  if (q.station) {
    const pattern = q.station.includes('*') ? q.station.replace(/[%_\\]/g, '\\$&').replace(/\*/g, '%') : q.station
    const match = q.station.includes('*')
      ? or(ilike(observations.at, pattern), ilike(observations.to, pattern), ilike(observations.from, pattern))
      : or(eq(observations.at, pattern), eq(observations.to, pattern), eq(observations.from, pattern))
    where.push(match!)
  }
  const sortCol = {
    line: observations.line, kind: observations.kind, at: natural(observations.at), from: natural(observations.from), to: natural(observations.to),
    value: observations.value, excluded: observations.excluded, set: observations.setId,
  }[q.sort]
  const order = q.dir === 'desc' ? desc(sortCol) : asc(sortCol)
  const filter = and(...where)
  const [rows, [count], profiles] = await Promise.all([
    db.select().from(observations).where(filter)
      .orderBy(order, asc(observations.setId), asc(observations.line), asc(observations.id))
      .limit(q.pageSize).offset((q.page - 1) * q.pageSize),
    db.select({ n: sql<number>`count(*)::int` }).from(observations).where(filter),
    profilesBySet(ctx, project),
  ])
  return {
    total: count?.n ?? 0,
    page: q.page,
    pageSize: q.pageSize,
    units: project.units,
    angleFormat: project.angleFormat,
    rows: await withLengths(ctx, project, rows, (lengthOf) => rows.map((o) => observationDto(o, project, profiles.get(o.setId) ?? null, lengthOf))),
  }
}

/** Lengths between the stations of a page of rows, from their stored control or approximate positions. */
async function withLengths<T>(ctx: FirmContext, project: Project, rows: ObservationRow[], f: (lengthOf: LengthOf) => T): Promise<T> {
  const names = [...new Set(rows.flatMap((o) => [o.at, o.to, ...(o.from ? [o.from] : [])]))]
  const pos = new Map<string, [number, number]>()
  if (names.length) {
    const found = await useDb().select({ name: stations.name, ce: stations.controlEast, cn: stations.controlNorth, ae: stations.approxEast, an: stations.approxNorth })
      .from(stations).where(and(eq(stations.firmId, ctx.firm.id), eq(stations.projectId, project.id), inArray(stations.name, names)))
    for (const s of found) {
      const e = s.ce ?? s.ae
      const n = s.cn ?? s.an
      if (e !== null && n !== null) pos.set(s.name, [e, n])
    }
  }
  return f((a, b) => {
    const p = pos.get(a)
    const q = pos.get(b)
    return p && q ? Math.hypot(q[0] - p[0], q[1] - p[1]) : null
  })
}

/** Parses a value typed in the project's units / angle format into metres or radians. */
function parseTyped(kind: string, text: string, project: Project): number {
  const p = ANGLE_KINDS.has(kind) ? parseAngle(text, project.angleFormat === 'gon' ? 'gon' : 'dms') : parseLength(text, project.units)
  if (!p.ok) throw new DomainError('invalid', 'Some fields are not valid', [{ field: 'valueText', message: `valueText: ${p.message}` }])
  return p.value
}

function checkRange(kind: string, value: number) {
  const bad = (m: string) => new DomainError('invalid', 'Some fields are not valid', [{ field: 'value', message: `value: ${m}` }])
  if (ANGLE_KINDS.has(kind)) {
    if (!(value >= 0 && value < 2 * Math.PI)) throw bad('an angle must be ≥ 0 and below a full circle')
  } else if (kind === 'height_difference') {
    if (Math.abs(value) > 1e4) throw bad('is too large for a height difference')
  } else if (!(value > 0 && value <= 1e6)) throw bad('a distance must be positive and at most 1000 km')
}

/** Edits a value or the excluded flag; the audit log keeps who, when, before and after. */
export async function updateObservation(ctx: FirmContext, project: Project, id: number, body: ObservationPatch): Promise<ObservationDto> {
  return useDb().transaction(async (tx) => {
    const [before] = await tx.select().from(observations)
      .where(and(eq(observations.firmId, ctx.firm.id), eq(observations.projectId, project.id), eq(observations.id, id))).limit(1).for('update')
    if (!before) throw notFound('No such observation')
    const patch: Partial<typeof observations.$inferInsert> = {}
    if (before.vector && (body.valueText !== undefined || body.value !== undefined)) {
      // one number cannot stand for ΔX ΔY ΔZ; the file is the record of the vector
      throw new DomainError('invalid', 'Some fields are not valid', [{ field: 'value', message: 'value: a GNSS vector is not edited here; correct it in the file and upload it again (you may exclude this vector)' }])
    }
    if (body.valueText !== undefined) patch.value = parseTyped(before.kind, body.valueText, project)
    else if (body.value !== undefined) patch.value = body.value
    if (patch.value !== undefined) {
      checkRange(before.kind, patch.value)
      if (before.originalValue === null) patch.originalValue = before.value
    }
    if (body.excluded !== undefined) patch.excluded = body.excluded
    const [after] = await tx.update(observations).set(patch).where(and(eq(observations.firmId, ctx.firm.id), eq(observations.id, id))).returning()
    const snap = (o: ObservationRow) => ({ setId: o.setId, line: o.line, kind: o.kind, at: o.at, from: o.from, to: o.to, value: o.value, originalValue: o.originalValue, excluded: o.excluded })
    const action = body.excluded !== undefined && patch.value === undefined
      ? (body.excluded ? 'observation.exclude' : 'observation.include')
      : 'observation.update'
    await audit(tx, {
      firmId: ctx.firm.id, userId: ctx.user.id, action, entityType: 'observation', entityId: id, projectId: project.id,
      before: snap(before), after: { ...snap(after!), ...(body.reason ? { reason: body.reason } : {}) },
    })
    const profiles = await profilesBySet(ctx, project)
    return withLengths(ctx, project, [after!], (lengthOf) => observationDto(after!, project, profiles.get(after!.setId) ?? null, lengthOf))
  })
}

/** For the page's unit hints: what a typed value means in this project. */
export function valueHint(project: Project): { length: string; angle: string } {
  return {
    length: project.units === 'm' ? 'metres' : project.units === 'ft' ? 'international feet' : 'US survey feet',
    angle: project.angleFormat === 'gon' ? 'gon (e.g. 123.4567)' : 'degrees minutes seconds (e.g. 123 45 06.7)',
  }
}
