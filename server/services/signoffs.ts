// Licensed sign-off of control points of one finished run. A sign-off is a
// legal record: it stores the run, the selected stations with coordinates and
// precisions, the signer and licence, the statement, the time, the accuracy
// check and a SHA-256 over a canonical serialisation of the signed coordinate
// list plus the run's input hash. It is never changed (a database trigger
// refuses UPDATE and DELETE); when the inputs change later it is shown as
// superseded, never edited.
import { naturalSortBy } from '../../shared/natural-sort'
import { and, desc, eq, gt, inArray, sql } from 'drizzle-orm'
import type { SignoffCreate, SignoffPreviewQuery } from '../../shared/schemas/signoffs'
import type { AdjustmentResult, StationResult } from '../engine/types'
import type { RunSettings } from '../../shared/schemas/adjustments'
import { adjustments, observationSets, projects, signoffs, users } from '../db/schema'
import type { Adjustment, Project, Signoff } from '../db/schema'
import { useDb } from '../db/client'
import type { FirmContext } from '../utils/guard'
import { DomainError, notFound } from '../utils/errors'
import { checkAccuracy, defaultSignStations } from './accuracy-check'
import type { AccuracyCheck, ResultLike } from './accuracy-check'
import { audit } from './audit'
import { notifySignoffCompleted, notifySignoffRequested } from './notifications'
import { sha256Hex } from './passwords'
import { checkCredentials } from './signin'
import { RunInputError, loadRunInputs } from './run-inputs'
import { allRelative, allStations, countFlaggedAny, type RunSummary } from './run-results'
import { getToleranceProfile } from './tolerance'

/** One signed station: metres and degrees, rounded to the canonical decimals. */
export interface SignedStation {
  name: string
  kind: 'control' | 'new'
  fixed: boolean
  east: number
  north: number
  height: number | null
  sdEast: number | null
  sdNorth: number | null
  sdHeight: number | null
  semiMajor: number | null
  semiMinor: number | null
  azimuthDeg: number | null
  semiMajor95: number | null
  semiMinor95: number | null
}

// Fixed decimals of the canonical form: lengths to 0.01 mm, azimuths to 0.001°.
const DECIMALS: Record<string, number> = { azimuthDeg: 3 }
const LENGTH_DECIMALS = 5
const decimalsOf = (key: string) => DECIMALS[key] ?? LENGTH_DECIMALS
const round = (v: number | null | undefined, key: string): number | null =>
  v === null || v === undefined || !Number.isFinite(v) ? null : Number(v.toFixed(decimalsOf(key)))

/**
 * Canonical JSON: object keys sorted, numbers written with fixed decimals
 * (as strings, so no float formatting can change the text), arrays in order.
 */
export function canonicalJson(value: unknown, key = ''): string {
  if (value === null || value === undefined) return 'null'
  if (typeof value === 'number') return JSON.stringify(value.toFixed(decimalsOf(key)))
  if (typeof value === 'string' || typeof value === 'boolean') return JSON.stringify(value)
  if (Array.isArray(value)) return `[${value.map((v) => canonicalJson(v, key)).join(',')}]`
  const obj = value as Record<string, unknown>
  return `{${Object.keys(obj).sort().map((k) => `${JSON.stringify(k)}:${canonicalJson(obj[k], k)}`).join(',')}}`
}

/** The sign-off hash: SHA-256 over the canonical signed list and the run's input hash. */
export function signoffHash(signed: SignedStation[], inputHash: string): string {
  // code-unit order, not natural: every sign-off's hash was computed over this order and must verify forever
  const sorted = [...signed].sort((a, b) => (a.name < b.name ? -1 : a.name > b.name ? 1 : 0))
  return sha256Hex(canonicalJson({ inputHash, stations: sorted }))
}

export function toSignedStation(s: StationResult): SignedStation {
  return {
    name: s.name,
    kind: s.kind,
    fixed: s.fixed,
    east: round(s.east, 'east')!,
    north: round(s.north, 'north')!,
    height: round(s.height, 'height'),
    sdEast: round(s.sdEast, 'sdEast'),
    sdNorth: round(s.sdNorth, 'sdNorth'),
    sdHeight: round(s.sdHeight, 'sdHeight'),
    semiMajor: round(s.ellipse?.semiMajor, 'semiMajor'),
    semiMinor: round(s.ellipse?.semiMinor, 'semiMinor'),
    azimuthDeg: round(s.ellipse?.azimuthDeg ?? s.ellipse95?.azimuthDeg, 'azimuthDeg'),
    semiMajor95: round(s.ellipse95?.semiMajor, 'semiMajor95'),
    semiMinor95: round(s.ellipse95?.semiMinor, 'semiMinor95'),
  }
}

// ── runs ───────────────────────────────────────────────────────────────────

export async function findRun(firmId: number, projectId: number, number: number): Promise<Adjustment> {
  const [run] = await useDb().select().from(adjustments)
    .where(and(eq(adjustments.firmId, firmId), eq(adjustments.projectId, projectId), eq(adjustments.number, number))).limit(1)
  if (!run) throw notFound('No such run')
  return run
}

/** What the accuracy check and the sign-off read of a finished run, from its result tables. */
interface SignableResult extends ResultLike {
  stations: StationResult[]
  summary: RunSummary
  /** observations in use that fail data snooping or the τ test */
  flaggedAny: number
}

async function doneResult(run: Adjustment): Promise<SignableResult> {
  if (run.status !== 'done' || !run.summary) {
    throw new DomainError('conflict', `Run ${run.number} is ${run.status}; only a finished run can be signed off`)
  }
  const summary = run.summary as unknown as RunSummary
  const [stations, relative, flaggedAny] = await Promise.all([
    allStations(run.firmId, run.id),
    allRelative(run.firmId, run.id),
    summary.flaggedAny ?? countFlaggedAny(run.firmId, run.id),
  ])
  return {
    stations, relative, summary, flaggedAny,
    settings: summary.settings ?? { confidence: summary.confidence, scaling: summary.scaling },
    dof: summary.dof,
    ...(summary.plane ? { plane: { dof: summary.plane.dof } } : {}),
  }
}

export interface RunSummaryDto {
  number: number
  finishedAt: string | null
  inputHash: string
  sigma0: number | null
  dof: number | null
  globalTest: AdjustmentResult['globalTest'] | null
  counts: AdjustmentResult['counts'] | null
  confidence: number | null
  /** significance level of the global test */
  alpha?: number | null
  /** control held as stored (fixed or weighted per station) or a free network */
  datum?: 'as-stored' | 'free' | null
  /** precisions scaled by the a-posteriori σ̂0² or by the a-priori σ0 = 1 */
  scaling?: 'a-posteriori' | 'a-priori' | null
}

export function runSummary(run: Adjustment): RunSummaryDto {
  const r = (run.status === 'done' ? run.summary ?? null : null) as Partial<RunSummary> | null
  return {
    number: run.number,
    finishedAt: run.finishedAt?.toISOString() ?? null,
    inputHash: run.inputHash,
    sigma0: r?.sigma0 ?? null,
    dof: r?.dof ?? null,
    globalTest: r?.globalTest ?? null,
    counts: r?.counts ?? null,
    confidence: r?.confidence ?? null,
    alpha: r?.alpha ?? null,
    datum: (run.settings as { datum?: string } | null)?.datum === 'free' ? 'free' : 'as-stored',
    scaling: r?.scaling ?? null,
  }
}

/** What the PDF draws and lists from the signed run: its network and the observations the signer accepted flagged. */
export async function runReportExtras(run: Adjustment): Promise<{ network: NetworkDrawing; flagged: FlaggedObservation[] }> {
  const stations = (await allStations(run.firmId, run.id)).filter((s) => s.east !== null && s.north !== null)
    .map((s) => ({ name: s.name, east: s.east!, north: s.north!, fixed: s.fixed, semiMajor95: s.ellipse95?.semiMajor ?? null, semiMinor95: s.ellipse95?.semiMinor ?? null, azimuthDeg: s.ellipse95?.azimuthDeg ?? null }))
  // observed lines, one per pair, and the observations still flagged (largest |w| first; a failed GNSS vector once, by its ΔX row)
  const pairs = await useDb().execute<{ a: string; b: string; terrestrial: boolean; vector: boolean }>(sql`select least("at", "to") as a, greatest("at", "to") as b,
      bool_or(kind <> 'gnss_baseline') as terrestrial, bool_or(kind = 'gnss_baseline') as vector from observation_results
    where firm_id = ${run.firmId} and adjustment_id = ${run.id} and kind <> 'control' and not excluded group by 1, 2`)
  const flaggedRows = await useDb().execute<{ line: number; kind: string; at: string; from: string | null; to: string | null; w: number | null }>(sql`select line, kind, "at", "from", "to", w from observation_results
    where firm_id = ${run.firmId} and adjustment_id = ${run.id} and not excluded
      and (flagged or tau_flagged or (coalesce(vector_flagged, false) and component = 'dx')) order by abs(coalesce(w, 0)) desc limit 500`)
  const pair = (r: { a: string; b: string }) => [r.a, r.b] as [string, string]
  return {
    network: { stations, lines: pairs.rows.filter((r) => r.terrestrial).map(pair), vectors: pairs.rows.filter((r) => r.vector).map(pair) },
    flagged: flaggedRows.rows,
  }
}

export interface NetworkDrawing {
  stations: { name: string; east: number; north: number; fixed: boolean; semiMajor95: number | null; semiMinor95: number | null; azimuthDeg: number | null }[]
  /** pairs joined by terrestrial observations (directions, angles, distances, levelling…) */
  lines: [string, string][]
  /** pairs joined by a GNSS vector (a pair may be in both lists) */
  vectors?: [string, string][]
}
export interface FlaggedObservation { line: number; kind: string; at: string; from: string | null; to: string | null; w: number | null }

export interface SignoffPreview {
  run: RunSummaryDto
  /** the check's verdict over every item; `items` lists the failing ones first, at most CHECK_ITEMS_SHOWN (`itemCount` says how many there are) */
  check: AccuracyCheck & { itemCount: number }
  /** one page of the stations that can be signed (with a horizontal position), in the run's order */
  stations: (SignedStation & { passes: boolean; selectedByDefault: boolean })[]
  stationPage: { page: number; size: number; total: number }
  /** the run's control points: held fixed or weighted; shown whatever the page */
  control: { name: string; fixed: boolean }[]
  /** how many stations a sign-off without a list signs: new stations that pass the accuracy check */
  defaultCount: number
  /** their names, when few enough to choose from (SELECTABLE_STATIONS); null: a sign-off signs that set as a whole */
  defaultStations: string[] | null
  /** statistical tests the run did not pass; signing then needs acknowledgeFailedTests */
  testWarnings: string[]
}

/** Runs with more signable stations than this sign the default set as a whole instead of a list of ticked names (a 10,000-station sign-off page stays one page of rows). */
export const SELECTABLE_STATIONS = 500
/** Accuracy-check items listed on the sign-off page, failing ones first; the verdict counts them all. */
export const CHECK_ITEMS_SHOWN = 200

/** What the sign-off page shows for one finished run before anyone signs: the summary, the check, one page of stations. */
export async function previewSignoff(ctx: FirmContext, project: Project, q: SignoffPreviewQuery): Promise<SignoffPreview> {
  const run = await findRun(ctx.firm.id, project.id, q.run)
  const result = await doneResult(run)
  const profile = await getToleranceProfile(ctx.firm.id, project.toleranceProfileId)
  const check = checkAccuracy(profile, result)
  const defaults = defaultSignStations(result, check)
  const isDefault = new Set(defaults)
  const failing = new Set(check.failing)
  const signable = naturalSortBy(result.stations.filter((s) => s.east !== null && s.north !== null), (s) => s.name)
  const items = [...check.items.filter((i) => !i.passes), ...check.items.filter((i) => i.passes)].slice(0, CHECK_ITEMS_SHOWN)
  return {
    run: runSummary(run),
    check: { ...check, items, itemCount: check.items.length },
    stations: signable.slice((q.page - 1) * q.size, q.page * q.size)
      .map((s) => ({ ...toSignedStation(s), passes: !failing.has(s.name), selectedByDefault: isDefault.has(s.name) })),
    stationPage: { page: q.page, size: q.size, total: signable.length },
    control: result.stations.filter((s) => s.kind === 'control' || s.fixed).map((s) => ({ name: s.name, fixed: s.fixed })),
    defaultCount: defaults.length,
    defaultStations: signable.length <= SELECTABLE_STATIONS ? defaults : null,
    testWarnings: failedTests(result),
  }
}

// ── signing ────────────────────────────────────────────────────────────────


export interface SignoffDto {
  id: number
  runNumber: number
  signerName: string
  licenceNumber: string
  licenceJurisdiction: string
  statement: string
  stations: SignedStation[]
  accuracyCheck: AccuracyCheck
  inputHash: string
  sha256: string
  signedAt: string
  superseded: boolean
  supersededReason: string | null
}

function signoffDto(s: Signoff, runNumber: number, state: { superseded: boolean; reason: string | null }): SignoffDto {
  return {
    id: s.id,
    runNumber,
    signerName: s.signerName,
    licenceNumber: s.licenceNumber,
    licenceJurisdiction: s.licenceJurisdiction,
    statement: s.statement,
    // listed in natural order; the record keeps the canonical order its SHA-256 was computed over
    stations: naturalSortBy(s.stations as unknown as SignedStation[], (x) => x.name),
    accuracyCheck: s.accuracyCheck as unknown as AccuracyCheck,
    inputHash: s.inputHash,
    sha256: s.sha256,
    signedAt: s.signedAt.toISOString(),
    superseded: state.superseded,
    supersededReason: state.reason,
  }
}

/** Advisory-lock namespace: (NS, run id) while a sign-off of that run is written. */
const SIGNOFF_LOCK_NS = 7033

/** Signing: the signer confirms their password, checked (and throttled) like a sign-in. */
export async function createSignoff(ctx: FirmContext, project: Project, runNumber: number, body: SignoffCreate, ip = 'unknown'): Promise<SignoffDto> {
  const db = useDb()
  const [signer] = await db.select().from(users).where(eq(users.id, ctx.user.id)).limit(1)
  if (!signer?.licenceNumber?.trim() || !signer.licenceJurisdiction?.trim()) {
    throw new DomainError('invalid', 'Your profile has no licence number and jurisdiction. Add both on your profile before signing off.', [
      ...(!signer?.licenceNumber?.trim() ? [{ field: 'licenceNumber', message: 'licenceNumber: is required on your profile to sign off' }] : []),
      ...(!signer?.licenceJurisdiction?.trim() ? [{ field: 'licenceJurisdiction', message: 'licenceJurisdiction: is required on your profile to sign off' }] : []),
    ])
  }
  if (!(await checkCredentials(signer.email, body.password, ip, 'signoff'))) {
    throw new DomainError('invalid', 'The password is not correct; nothing was signed', [{ field: 'password', message: 'password: is not correct' }])
  }
  const run = await findRun(ctx.firm.id, project.id, runNumber)
  const result = await doneResult(run)
  const testWarnings = failedTests(result)
  if (testWarnings.length && body.acknowledgeFailedTests !== true) {
    throw new DomainError('invalid', `Run ${runNumber} did not pass its statistical tests: ${testWarnings.join('; ')}. Read the run report, then confirm that you sign regardless; nothing was signed.`, [
      { field: 'acknowledgeFailedTests', message: `acknowledgeFailedTests: must be true to sign a run that ${testWarnings.join(' and ')}` },
    ])
  }
  const profile = await getToleranceProfile(ctx.firm.id, project.toleranceProfileId)
  const check = { ...checkAccuracy(profile, result), ...(testWarnings.length ? { acknowledgedFailedTests: testWarnings } : {}) }
  const byName = new Map(result.stations.map((s) => [s.name, s]))
  const names = body.stations ? [...new Set(body.stations)] : defaultSignStations(result, check)
  if (names.length === 0) {
    throw new DomainError('invalid', 'No station passes the accuracy check, so there is nothing to sign by default; name the stations to sign', [{ field: 'stations', message: 'stations: none selected' }])
  }
  const issues = names.flatMap((n, i) => {
    const s = byName.get(n)
    if (!s) return [{ field: `stations.${i}`, message: `stations.${i}: '${n}' is not a station of run ${runNumber}` }]
    if (s.east === null || s.north === null) return [{ field: `stations.${i}`, message: `stations.${i}: '${n}' has no adjusted horizontal position` }]
    return []
  })
  if (issues.length) throw new DomainError('invalid', 'Some stations cannot be signed', issues)

  const signed = names.map((n) => toSignedStation(byName.get(n)!)).sort((a, b) => (a.name < b.name ? -1 : a.name > b.name ? 1 : 0))
  const sha256 = signoffHash(signed, run.inputHash)
  const { row, replay } = await db.transaction(async (tx) => {
    // A double-submitted sign-off (same signer, run, coordinates and statement) makes one record:
    // the run's lock serialises the two requests and the second finds the first.
    await tx.execute(sql`select pg_advisory_xact_lock(${SIGNOFF_LOCK_NS}, ${run.id})`)
    const [same] = await tx.select().from(signoffs).where(and(eq(signoffs.firmId, ctx.firm.id), eq(signoffs.adjustmentId, run.id),
      eq(signoffs.signerId, signer.id), eq(signoffs.sha256, sha256), eq(signoffs.statement, body.statement))).limit(1)
    if (same) return { row: same, replay: true }
    const [s] = await tx.insert(signoffs).values({
      firmId: ctx.firm.id,
      projectId: project.id,
      adjustmentId: run.id,
      signerId: signer.id,
      signerName: signer.name,
      licenceNumber: signer.licenceNumber!,
      licenceJurisdiction: signer.licenceJurisdiction!,
      statement: body.statement,
      stations: signed as unknown as Record<string, unknown>[],
      accuracyCheck: check as unknown as Record<string, unknown>,
      inputHash: run.inputHash,
      sha256,
    }).returning()
    if (project.status !== 'released') {
      await tx.update(projects).set({ status: 'signed' }).where(and(eq(projects.firmId, ctx.firm.id), eq(projects.id, project.id)))
    }
    await audit(tx, {
      firmId: ctx.firm.id, userId: ctx.user.id, action: 'signoff.create', entityType: 'signoff', entityId: s!.id, projectId: project.id,
      after: { run: run.number, stations: signed.map((x) => x.name), sha256, inputHash: run.inputHash, ...(testWarnings.length ? { acknowledgedFailedTests: testWarnings } : {}) },
    })
    return { row: s!, replay: false }
  })
  if (replay) return signoffDto(row, run.number, { superseded: false, reason: null })
  await notifySignoffCompleted({ firmId: ctx.firm.id, projectId: project.id, runNumber: run.number, signerName: signer.name, stationCount: signed.length, sha256 })
  return signoffDto(row, run.number, { superseded: false, reason: null })
}

/** What a signer must knowingly accept: a failed global test, flagged observations still in use. */
export function failedTests(result: { summary: Pick<RunSummary, 'globalTest' | 'plane' | 'height'>; flaggedAny: number }): string[] {
  const out: string[] = []
  // the plane and the height network are gated separately: one may pass while the
  // other fails or has no redundancy at all (its global test is then not applicable)
  const summary = result.summary
  if (summary.globalTest.passed === false) out.push('failed its global test')
  const nets = [['plane', summary.plane], ['height', summary.height]] as const
  for (const [name, net] of nets) {
    if (!net) continue
    if (net.globalTest.passed === false && summary.globalTest.passed !== false) out.push(`the ${name} network failed its global test`)
    if (net.globalTest.passed === null) out.push(`the ${name} network has no redundancy: its global test is not applicable and nothing in it is checked`)
  }
  if (summary.globalTest.passed === null && !summary.plane && !summary.height) out.push('has no redundancy: the global test is not applicable')
  const flagged = result.flaggedAny
  if (flagged) out.push(`still uses ${flagged} flagged observation${flagged === 1 ? '' : 's'}`)
  return out
}

export async function requestSignoff(ctx: FirmContext, project: Project, runNumber: number, note?: string) {
  const run = await findRun(ctx.firm.id, project.id, runNumber)
  if (run.status !== 'done' || !run.summary) throw new DomainError('conflict', `Run ${run.number} is ${run.status}; only a finished run can be signed off`)
  const out = await notifySignoffRequested({ firmId: ctx.firm.id, projectId: project.id, runNumber, requestedBy: ctx.user.name, note })
  await audit(useDb(), { firmId: ctx.firm.id, userId: ctx.user.id, action: 'signoff.request', entityType: 'adjustment', entityId: run.id, projectId: project.id, after: { run: runNumber, recipients: out.recipients } })
  if (out.recipients.length === 0) throw new DomainError('conflict', 'The firm has no licensed surveyor to ask; an owner can invite one on the Members page')
  return { run: runNumber, sentTo: out.recipients.length }
}

// ── superseded state ───────────────────────────────────────────────────────

/**
 * Whether newer data has replaced the inputs of a signed run: the project's
 * current input hash (the run's own settings over today's observations,
 * control and profiles, hashed by run-inputs.ts exactly as when the run was
 * queued) differs from the run's, a newer observation file was uploaded, or a
 * newer finished run used different inputs. Never edits the sign-off.
 */
export async function supersededState(firmId: number, projectId: number, run: Pick<Adjustment, 'id' | 'number' | 'inputHash' | 'createdAt' | 'settings'>): Promise<{ superseded: boolean; reason: string | null }> {
  const db = useDb()
  const [newer] = await db.select({ number: adjustments.number }).from(adjustments)
    .where(and(eq(adjustments.firmId, firmId), eq(adjustments.projectId, projectId), eq(adjustments.status, 'done'),
      gt(adjustments.number, run.number), sql`${adjustments.inputHash} <> ${run.inputHash}`))
    .orderBy(desc(adjustments.number)).limit(1)
  if (newer) return { superseded: true, reason: `Superseded by newer data: run ${newer.number} was adjusted from different inputs.` }
  let current: string | null = null
  try {
    current = (await loadRunInputs(firmId, projectId, run.settings as unknown as RunSettings)).hash
  } catch (e) {
    if (!(e instanceof RunInputError)) throw e
  }
  if (current !== run.inputHash) {
    return { superseded: true, reason: `Superseded by newer data: observations, control or settings changed after run ${run.number} was made.` }
  }
  const [upload] = await db.select({ id: observationSets.id }).from(observationSets)
    .where(and(eq(observationSets.firmId, firmId), eq(observationSets.projectId, projectId), gt(observationSets.createdAt, run.createdAt))).limit(1)
  if (upload) return { superseded: true, reason: `Superseded by newer data: an observation file was uploaded after run ${run.number} was made.` }
  return { superseded: false, reason: null }
}

export async function listSignoffs(ctx: FirmContext, project: Project): Promise<SignoffDto[]> {
  const rows = await useDb().select({ s: signoffs, run: adjustments }).from(signoffs)
    .innerJoin(adjustments, and(eq(adjustments.id, signoffs.adjustmentId), eq(adjustments.firmId, signoffs.firmId)))
    .where(and(eq(signoffs.firmId, ctx.firm.id), eq(signoffs.projectId, project.id)))
    .orderBy(desc(signoffs.signedAt), desc(signoffs.id))
  const out: SignoffDto[] = []
  for (const r of rows) out.push(signoffDto(r.s, r.run.number, await supersededState(ctx.firm.id, project.id, r.run)))
  return out
}

export async function getSignoff(firmId: number, projectId: number, id: number): Promise<{ signoff: Signoff; run: Adjustment }> {
  const [row] = await useDb().select({ s: signoffs, run: adjustments }).from(signoffs)
    .innerJoin(adjustments, and(eq(adjustments.id, signoffs.adjustmentId), eq(adjustments.firmId, signoffs.firmId)))
    .where(and(eq(signoffs.firmId, firmId), eq(signoffs.projectId, projectId), eq(signoffs.id, id))).limit(1)
  if (!row) throw notFound('No such sign-off')
  return { signoff: row.s, run: row.run }
}

/** Finished runs a signer can choose from on the sign-off page. */
export async function listSignableRuns(ctx: FirmContext, project: Project) {
  const rows = await useDb().select({ number: adjustments.number, finishedAt: adjustments.finishedAt, inputHash: adjustments.inputHash })
    .from(adjustments)
    .where(and(eq(adjustments.firmId, ctx.firm.id), eq(adjustments.projectId, project.id), inArray(adjustments.status, ['done'])))
    .orderBy(desc(adjustments.number))
  return rows.map((r) => ({ number: r.number, finishedAt: r.finishedAt?.toISOString() ?? null, inputHash: r.inputHash }))
}
