// Adjustment runs: queue a run (numbered per project, inputs hashed), list and
// read runs (results by page, from run-results.ts), compare two, export
// results, exclude an observation and run again, and the worker's side:
// compute a run and store its results (COPY) in one transaction.
// A finished run (done | failed) is never changed by anything here.
import type { Readable } from 'node:stream'
import { and, desc, eq, sql } from 'drizzle-orm'
import type { PoolClient } from 'pg'
import { runSettingsSchema, type RunSettings } from '../../shared/schemas/adjustments'
import { observationPageQuery, relativePageQuery, stationPageQuery } from '../../shared/schemas/run-results'
import type { CompareQuery, ObservationPageQuery, RelativePageQuery, StationPageQuery, VectorPageQuery } from '../../shared/schemas/run-results'
import { usePool, useDb, type Tx } from '../db/client'
import { adjustments, observations, projects, users } from '../db/schema'
import type { Adjustment, Project } from '../db/schema'
import { adjustNetwork } from '../engine/index'
import { DomainError, notFound } from '../utils/errors'
import type { FirmContext } from '../utils/guard'
import { checkRelative, semiMajorAt95 } from './accuracy'
import { audit } from './audit'
import { notifyRunFailed } from './notifications'
import type { RunDto, RunListItem, RunWeighting } from '../../shared/types/run'

export type { RunListItem }
import { loadRunInputs, RunInputError } from './run-inputs'
import { ADJUST_QUEUE, jobPolicy, readyQueue, sendAdjustJob, type AdjustJob } from './run-queue'
import {
  buildSummary, cliShape, compareRuns, csvStream, overviewJson, pageObservations, pageRelative, pageStations, pageVectors, storeOverview, storeResults, type RunSummary,
} from './run-results'

export type RunStatus = Adjustment['status']


// ── queueing ────────────────────────────────────────────────────────────────

/**
 * Queues a run; 422 names the setting that cannot be used. The run row, its
 * audit entry and its queue job are written in one transaction, so there is
 * never a queued run without a job (or a job without its run); `before` runs
 * first in that same transaction (an exclusion is kept only if its re-run is
 * queued). The worker's sweep also sends a job again for a queued run whose
 * job is gone, so no run stays queued for ever.
 */
export async function queueRun(ctx: FirmContext, project: Project, body: unknown, opts: { queue?: string; before?: (tx: Tx) => Promise<void> } = {}): Promise<{ number: number; status: RunStatus }> {
  const parsed = runSettingsSchema.safeParse(body ?? {})
  if (!parsed.success) {
    throw new DomainError('invalid', 'Some settings are not valid', parsed.error.issues.map((i) => ({ field: i.path.join('.') || undefined, message: i.path.length ? `${i.path.join('.')}: ${i.message}` : i.message })))
  }
  const queue = opts.queue ?? ADJUST_QUEUE
  try {
    await readyQueue(queue)
  } catch (e) {
    console.error('[tiepoint] the job queue is not available:', (e as Error).message)
    throw new DomainError('busy', 'The job queue is not available right now; nothing was queued. Please try again in a minute.')
  }
  try {
    const run = await useDb().transaction(async (tx) => {
      await opts.before?.(tx)
      // The project row lock serialises number allocation between concurrent requests.
      await tx.execute(sql`select id from ${projects} where ${projects.firmId} = ${ctx.firm.id} and ${projects.id} = ${project.id} for update`)
      const inputs = await loadRunInputs(ctx.firm.id, project.id, parsed.data, tx, true)
      const [{ next }] = await tx.select({ next: sql<number>`coalesce(max(${adjustments.number}), 0)::int + 1` }).from(adjustments)
        .where(and(eq(adjustments.firmId, ctx.firm.id), eq(adjustments.projectId, project.id))) as [{ next: number }]
      const [row] = await tx.insert(adjustments).values({
        firmId: ctx.firm.id, projectId: project.id, number: next, settings: inputs.settings as unknown as Record<string, unknown>,
        inputHash: inputs.hash, status: 'queued', createdBy: ctx.user.id,
        // known before the run is computed, so a queued run's page already says how it will be weighted
        summary: { weighting: inputs.weighting, warnings: inputs.warnings },
      }).returning()
      await audit(tx, { firmId: ctx.firm.id, userId: ctx.user.id, action: 'adjustment.queue', entityType: 'adjustment', entityId: row!.id, projectId: project.id, after: { number: next, settings: inputs.settings, inputHash: inputs.hash } })
      await sendAdjustJob({ adjustmentId: row!.id, firmId: ctx.firm.id, projectId: project.id }, queue, tx)
      return row!
    })
    return { number: run.number, status: run.status }
  } catch (e) {
    if (e instanceof RunInputError) throw new DomainError('invalid', e.message, [{ field: e.field, message: e.message }])
    if (e instanceof DomainError) throw e
    console.error('[tiepoint] queueing a run failed:', e)
    throw new DomainError('busy', 'The run could not be queued; nothing was saved. Please try again in a minute.')
  }
}

// ── reading ─────────────────────────────────────────────────────────────────

export async function listRuns(ctx: FirmContext, project: Project): Promise<RunListItem[]> {
  const rows = await useDb().select({ a: adjustments, by: users.name }).from(adjustments)
    .leftJoin(users, eq(users.id, adjustments.createdBy))
    .where(and(eq(adjustments.firmId, ctx.firm.id), eq(adjustments.projectId, project.id)))
    .orderBy(desc(adjustments.number))
  return rows.map(({ a, by }) => {
    const s = (a.summary ?? {}) as { sigma0?: number | null; globalTest?: { passed?: boolean }; flagged?: number }
    return {
      number: a.number, status: a.status, createdAt: a.createdAt.toISOString(), startedAt: a.startedAt?.toISOString() ?? null,
      finishedAt: a.finishedAt?.toISOString() ?? null, createdBy: by, sigma0: s.sigma0 ?? null, globalTestPassed: s.globalTest?.passed ?? null,
      flagged: s.flagged ?? null, errorText: a.errorText, inputHash: a.inputHash, settings: a.settings,
    }
  })
}

async function findRun(ctx: FirmContext, project: Project, number: number): Promise<Adjustment> {
  const [run] = await useDb().select().from(adjustments)
    .where(and(eq(adjustments.firmId, ctx.firm.id), eq(adjustments.projectId, project.id), eq(adjustments.number, number))).limit(1)
  if (!run) throw notFound('No such run in this project')
  return run
}

/**
 * One run: its settings and typed summary, `weighting` when the engine
 * reported it, and the first page of stations (engine order), observation
 * results (largest |w| first) and relative precisions, with each list's total;
 * `result` is the CLI's JSON shape over that first page. The rest comes from
 * the paged routes (stations, observations, relative).
 */
export async function getRun(ctx: FirmContext, project: Project, number: number) {
  const run = await findRun(ctx, project, number)
  const db = useDb()
  const [by] = run.createdBy ? await db.select({ name: users.name }).from(users).where(eq(users.id, run.createdBy)) : []
  const summary = (run.summary ?? null) as RunSummary | null
  const base = {
    number: run.number, status: run.status, attempts: run.attempts, settings: run.settings, inputHash: run.inputHash,
    createdAt: run.createdAt.toISOString(), startedAt: run.startedAt?.toISOString() ?? null, finishedAt: run.finishedAt?.toISOString() ?? null,
    createdBy: by?.name ?? null, errorText: run.errorText, summary,
    weighting: summary?.weighting ?? ((run.summary as { weighting?: RunWeighting[] } | null)?.weighting ?? null),
    warnings: ((run.summary as { warnings?: string[] } | null)?.warnings ?? []),
    project: { units: project.units, angleFormat: project.angleFormat, crs: project.crs, crsDefinition: project.crsDefinition, tileUrl: ctx.firm.settings?.tileUrl ?? null },
  }
  if (run.status !== 'done' || !summary) return { ...base, result: null, stations: [], observations: [], relative: [], totals: { stations: 0, observations: 0, relative: 0 } }
  const [stations, observations, relative] = await Promise.all([
    pageStations(ctx.firm.id, run.id, summary.rows?.stations, stationPageQuery.parse({})),
    pageObservations(ctx.firm.id, run.id, summary.rows?.observations, observationPageQuery.parse({})),
    pageRelative(ctx.firm.id, run.id, summary.rows?.relative, relativePageQuery.parse({})),
  ])
  return {
    ...base,
    result: cliShape(summary, stations.rows, observations.rows),
    stations: stations.rows,
    observations: observations.rows,
    relative: relative.rows,
    totals: { stations: stations.total, observations: observations.total, relative: relative.total },
  }
}

/** A finished run, or 409 naming its state. */
export async function findDoneRun(ctx: FirmContext, project: Project, number: number): Promise<Adjustment> {
  const run = await findRun(ctx, project, number)
  if (run.status !== 'done' || !run.summary) throw new DomainError('conflict', `Run ${number} has no results (${run.status})`)
  return run
}

/** Rows the run stored, from its summary: an unfiltered page then needs no count over 100,000 rows. */
const storedRows = (run: Adjustment) => (run.summary as unknown as RunSummary).rows

export async function runStations(ctx: FirmContext, project: Project, number: number, q: StationPageQuery) {
  const run = await findDoneRun(ctx, project, number)
  return pageStations(ctx.firm.id, run.id, storedRows(run)?.stations, q)
}
export async function runObservations(ctx: FirmContext, project: Project, number: number, q: ObservationPageQuery) {
  const run = await findDoneRun(ctx, project, number)
  return pageObservations(ctx.firm.id, run.id, storedRows(run)?.observations, q)
}
export async function runVectors(ctx: FirmContext, project: Project, number: number, q: VectorPageQuery) {
  return pageVectors(ctx.firm.id, (await findDoneRun(ctx, project, number)).id, q)
}
export async function runRelative(ctx: FirmContext, project: Project, number: number, q: RelativePageQuery) {
  const run = await findDoneRun(ctx, project, number)
  return pageRelative(ctx.firm.id, run.id, storedRows(run)?.relative, q)
}
/** The overview's JSON text (docs/api.md): kept with the run when it was stored. */
export async function runOverview(ctx: FirmContext, project: Project, number: number): Promise<string> {
  const run = await findDoneRun(ctx, project, number)
  return overviewJson(ctx.firm.id, run.id)
}

/** Two finished runs of the project: σ̂0, tests, station shifts (paged, largest first), changed flags and exclusions. */
export async function compareProjectRuns(ctx: FirmContext, project: Project, q: CompareQuery) {
  const [a, b] = await Promise.all([findDoneRun(ctx, project, q.a), findDoneRun(ctx, project, q.b)])
  const brief = (r: Adjustment) => {
    const s = r.summary as unknown as RunSummary
    return { number: r.number, sigma0: s.sigma0, globalTest: s.globalTest, flagged: s.flagged, excluded: s.excluded, inputHash: r.inputHash }
  }
  return { a: brief(a), b: brief(b), units: project.units, ...(await compareRuns(ctx.firm.id, a, b, q)) }
}

/** Just enough for a progress poll. */
export async function getRunStatus(ctx: FirmContext, project: Project, number: number) {
  const run = await findRun(ctx, project, number)
  return { number: run.number, status: run.status, attempts: run.attempts, errorText: run.errorText }
}

// ── export ──────────────────────────────────────────────────────────────────

/** The run's coordinates or residuals as CSV in project units, streamed from the database. */
export async function exportCsv(ctx: FirmContext, project: Project, number: number, what: 'coordinates' | 'residuals'): Promise<{ fileName: string; stream: Readable }> {
  const run = await findDoneRun(ctx, project, number)
  await audit(useDb(), { firmId: ctx.firm.id, userId: ctx.user.id, action: 'adjustment.export', entityType: 'adjustment', entityId: run.id, projectId: project.id, after: { number, what } })
  return { fileName: `run-${number}-${what}.csv`, stream: await csvStream(run, project, what) }
}

// ── exclude and run again ───────────────────────────────────────────────────

/** Excludes one observation of the project and queues a run with the settings of run `number`. */
export async function excludeAndRerun(ctx: FirmContext, project: Project, number: number, observationId: number, opts: { queue?: string } = {}) {
  const run = await findRun(ctx, project, number)
  const db = useDb()
  const [obs] = await db.select().from(observations)
    .where(and(eq(observations.firmId, ctx.firm.id), eq(observations.projectId, project.id), eq(observations.id, observationId))).limit(1)
  if (!obs) throw new DomainError('invalid', 'That observation is not in this project', [{ field: 'observationId', message: 'observationId: not in this project' }])
  // The exclusion and the re-run commit together: a run that cannot be queued leaves the observation as it was.
  const exclude = async (tx: Tx) => {
    if (obs.excluded) return
    await tx.update(observations).set({ excluded: true }).where(and(eq(observations.firmId, ctx.firm.id), eq(observations.id, obs.id)))
    await audit(tx, { firmId: ctx.firm.id, userId: ctx.user.id, action: 'observation.exclude', entityType: 'observation', entityId: obs.id, projectId: project.id,
      before: { excluded: false }, after: { excluded: true, fromRun: run.number } })
  }
  return queueRun(ctx, project, run.settings, { ...opts, before: exclude })
}

// ── the worker's side ───────────────────────────────────────────────────────

/** Advisory-lock namespace: a run being computed holds (NS, run id) on its worker's session. */
const RUN_LOCK_NS = 7031

async function tryLock(client: PoolClient, runId: number): Promise<boolean> {
  const { rows } = await client.query<{ ok: boolean }>('select pg_try_advisory_lock($1, $2) as ok', [RUN_LOCK_NS, runId])
  return rows[0]!.ok
}
async function unlock(client: PoolClient, runId: number) {
  await client.query('select pg_advisory_unlock($1, $2)', [RUN_LOCK_NS, runId]).catch(() => undefined)
}

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms))

export interface ProcessOutcome { status: RunStatus | 'skipped'; reason?: string }

/**
 * Computes one queued run. Engine failures end the run `failed` with the
 * engine's message (no retry: the same inputs fail the same way). Other errors
 * are thrown so the queue retries; on the last attempt the run is marked failed.
 */
export async function processRun(job: AdjustJob, attempt: { final: boolean } = { final: true }): Promise<ProcessOutcome> {
  const db = useDb()
  const client = await usePool().connect()
  try {
    if (!(await tryLock(client, job.adjustmentId))) return { status: 'skipped', reason: 'another worker is computing this run' }
    const [run] = await db.select().from(adjustments).where(and(eq(adjustments.firmId, job.firmId), eq(adjustments.id, job.adjustmentId))).limit(1)
    if (!run) return { status: 'skipped', reason: 'run no longer exists' }
    if (run.status === 'done' || run.status === 'failed') return { status: 'skipped', reason: `run already ${run.status}` }
    await db.update(adjustments).set({ status: 'running', startedAt: new Date(), attempts: run.attempts + 1, errorText: null })
      .where(and(eq(adjustments.firmId, job.firmId), eq(adjustments.id, run.id)))
    try {
      // Test hook: hold the run so a test can stop the worker mid-run.
      const hold = Number(process.env.TIEPOINT_WORKER_TEST_DELAY_MS ?? 0)
      if (hold > 0) await sleep(hold)
      return await computeAndStore(run)
    } catch (e) {
      const message = e instanceof RunInputError ? e.message : 'The worker hit an unexpected error while computing this run'
      if (e instanceof RunInputError || attempt.final) {
        await finishFailed(run, message)
        if (e instanceof RunInputError) return { status: 'failed', reason: message }
      } else {
        await db.update(adjustments).set({ status: 'queued', errorText: `${message}; it will be tried again` })
          .where(and(eq(adjustments.firmId, run.firmId), eq(adjustments.id, run.id), eq(adjustments.status, 'running')))
      }
      throw e
    }
  } finally {
    await unlock(client, job.adjustmentId)
    client.release()
  }
}

async function finishFailed(run: Adjustment, message: string, summary?: Record<string, unknown>) {
  const changed = await useDb().update(adjustments).set({ status: 'failed', finishedAt: new Date(), errorText: message, ...(summary ? { summary } : {}) })
    .where(and(eq(adjustments.firmId, run.firmId), eq(adjustments.id, run.id), sql`${adjustments.status} in ('queued', 'running')`))
    .returning({ id: adjustments.id })
  if (changed.length) {
    await audit(useDb(), { firmId: run.firmId, userId: null, action: 'adjustment.fail', entityType: 'adjustment', entityId: run.id, projectId: run.projectId, after: { number: run.number, reason: message } })
    await tellRunFailed(run.id)
  }
}

/** The e-mail is a courtesy: a mail server that is down must not change the run's outcome. */
async function tellRunFailed(runId: number) {
  try {
    await notifyRunFailed(runId)
  } catch (e) {
    console.error(`[tiepoint] could not send the run-failed e-mail for run ${runId}:`, (e as Error).message)
  }
}

async function computeAndStore(run: Adjustment): Promise<ProcessOutcome> {
  const settings = runSettingsSchema.parse(stripResolved(run.settings))
  const inputs = await loadRunInputs(run.firmId, run.projectId, { ...settings, observationSetIds: (run.settings as { observationSetIds?: number[] }).observationSetIds })
  const t0 = performance.now()
  const outcome = adjustNetwork(inputs.input, inputs.engineSettings)
  const engineMs = Math.round(performance.now() - t0)
  if (!outcome.ok) {
    await finishFailed(run, outcome.reason, { code: outcome.code, stations: outcome.stations ?? [], engineMs, warnings: inputs.warnings, weighting: inputs.weighting })
    return { status: 'failed', reason: outcome.reason }
  }
  const r = outcome.result
  const estimated = settings.scaling === 'a-posteriori'
  const planeDof = r.plane?.dof ?? r.dof
  const relChecks = r.relative.map((rel) => {
    const sm95 = Math.abs(settings.confidence - 0.95) < 1e-9 ? rel.semiMajor95 : semiMajorAt95(rel.semiMajor, estimated, planeDof)
    return { rel, check: checkRelative(inputs.tolerance, { distance: rel.distance, semiMajor95: sm95 }) }
  })
  const summary = buildSummary(r, inputs.tolerance, relChecks.map((c) => c.check.passes), engineMs, inputs.warnings, inputs.weighting)
  const db = useDb()
  await db.transaction(async (tx) => {
    const firmId = run.firmId
    const [locked] = await tx.select({ status: adjustments.status }).from(adjustments)
      .where(and(eq(adjustments.firmId, firmId), eq(adjustments.id, run.id))).for('update')
    if (!locked || locked.status !== 'running') return
    summary.storeMs = await storeResults(tx, firmId, run.id, r, inputs.stationKinds, relChecks)
    summary.overviewMs = await storeOverview(tx, firmId, run.id)
    await tx.update(adjustments).set({
      status: 'done', finishedAt: new Date(), summary: summary as unknown as Record<string, unknown>, inputHash: inputs.hash, errorText: null,
    }).where(and(eq(adjustments.firmId, firmId), eq(adjustments.id, run.id)))
    await tx.update(projects).set({ status: 'adjusted' })
      .where(and(eq(projects.firmId, firmId), eq(projects.id, run.projectId), eq(projects.status, 'collecting')))
    await audit(tx, { firmId, userId: null, action: 'adjustment.done', entityType: 'adjustment', entityId: run.id, projectId: run.projectId, after: { number: run.number, inputHash: inputs.hash, sigma0: r.sigma0 } })
  })
  return { status: 'done' }
}

/** Stored settings carry resolved extras; the schema is strict, so keep only its own keys. */
function stripResolved(s: Record<string, unknown>): RunSettings {
  const { observationSetIds: _ids, ...rest } = s
  return rest as unknown as RunSettings
}

/**
 * Runs left `running` by a worker that died: no live session holds their lock.
 * Their queue job is failed so pg-boss retries it (run back to `queued`), or,
 * with no retry left or no job at all, the run ends `failed`.
 */
export async function sweepStuckRuns(failJob: (queue: string, jobId: string) => Promise<void>): Promise<{ requeued: number; failed: number }> {
  const db = useDb()
  const stuck = await db.select({ id: adjustments.id, firmId: adjustments.firmId }).from(adjustments).where(eq(adjustments.status, 'running'))
  let requeued = 0
  let failed = 0
  if (!stuck.length) return { requeued, failed }
  const client = await usePool().connect()
  try {
    for (const s of stuck) {
      if (!(await tryLock(client, s.id))) continue
      try {
        const { rows } = await client.query<{ id: string; name: string; state: string }>(
          `select id, name, state from pgboss.job where (data->>'adjustmentId')::int = $1 order by created_on desc limit 1`, [s.id]).catch(() => ({ rows: [] as { id: string; name: string; state: string }[] }))
        let job = rows[0]
        if (job?.state === 'active') {
          await failJob(job.name, job.id)
          const again = await client.query<{ state: string }>('select state from pgboss.job where id = $1 and name = $2', [job.id, job.name])
          job = { ...job, state: again.rows[0]?.state ?? 'failed' }
        }
        const where = and(eq(adjustments.firmId, s.firmId), eq(adjustments.id, s.id), eq(adjustments.status, 'running'))
        if (job && (job.state === 'retry' || job.state === 'created')) {
          await db.update(adjustments).set({ status: 'queued', errorText: 'The worker computing this run stopped; the run is queued again' }).where(where)
          await audit(db, { firmId: s.firmId, userId: null, action: 'adjustment.sweep', entityType: 'adjustment', entityId: s.id, after: { outcome: 'requeued' } })
          requeued++
        } else {
          await db.update(adjustments).set({ status: 'failed', finishedAt: new Date(), errorText: 'The worker computing this run stopped and no retry is left; start the run again' }).where(where)
          await audit(db, { firmId: s.firmId, userId: null, action: 'adjustment.sweep', entityType: 'adjustment', entityId: s.id, after: { outcome: 'failed' } })
          failed++
          await tellRunFailed(s.id)
        }
      } finally {
        await unlock(client, s.id)
      }
    }
  } finally {
    client.release()
  }
  return { requeued, failed }
}

/**
 * Runs left `queued` with no live job (created, retry or active) for longer
 * than `olderThanSeconds`: a job lost with the queue's schema, or one that
 * ended without its run being told. Each gets a new job, sent in the same
 * transaction that re-checks the run; a run that has used all its attempts
 * ends `failed` instead. Together with the transactional send in queueRun,
 * no run stays queued for ever.
 */
export async function sweepQueuedWithoutJob(queue: string, olderThanSeconds: number): Promise<{ resent: number; failed: number }> {
  const db = useDb()
  const { rows } = await usePool().query<{ id: number; firm_id: number; project_id: number; attempts: number }>(`
    select a.id, a.firm_id, a.project_id, a.attempts from adjustments a
    where a.status = 'queued' and a.created_at < now() - make_interval(secs => $1)
      and not exists (select 1 from pgboss.job j
        where (j.data->>'adjustmentId') = a.id::text and j.state in ('created', 'retry', 'active'))
    order by a.id limit 100`, [olderThanSeconds])
  let resent = 0
  let failed = 0
  const maxAttempts = jobPolicy().retryLimit + 1
  for (const r of rows) {
    if (r.attempts >= maxAttempts) {
      const [run] = await db.select().from(adjustments).where(and(eq(adjustments.firmId, r.firm_id), eq(adjustments.id, r.id))).limit(1)
      if (run) await finishFailed(run, 'The run was tried as often as allowed and its job is gone; start the run again')
      failed++
      continue
    }
    await readyQueue(queue)
    const sent = await db.transaction(async (tx) => {
      const [still] = await tx.select({ status: adjustments.status }).from(adjustments)
        .where(and(eq(adjustments.firmId, r.firm_id), eq(adjustments.id, r.id))).for('update')
      if (still?.status !== 'queued') return false
      await sendAdjustJob({ adjustmentId: r.id, firmId: r.firm_id, projectId: r.project_id }, queue, tx)
      await audit(tx, { firmId: r.firm_id, userId: null, action: 'adjustment.requeue', entityType: 'adjustment', entityId: r.id, projectId: r.project_id, after: { reason: 'queued without a job', queue } })
      return true
    })
    if (sent) resent++
  }
  return { resent, failed }
}
