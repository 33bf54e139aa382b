// Queue integrity: a run and its job are committed together, so a queue that
// refuses the job leaves no run (and no exclusion) behind; a run left queued
// without a job is sent again by the worker's sweep or failed when its
// attempts are used up; a double-submitted sign-off or release makes one record.
// Runs queued here go to a queue of their own that no worker serves.
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest'
import { and, eq, sql } from 'drizzle-orm'
import { closeDb, usePool, useDb } from '../../server/db/client'
import { adjustments, auditLog, observations, projects, releases, signoffs } from '../../server/db/schema'
import { excludeAndRerun, queueRun, sweepQueuedWithoutJob } from '../../server/services/adjustments'
import { stopBoss } from '../../server/services/run-queue'
import { DomainError } from '../../server/utils/errors'
import { as, DEMO, type Client } from '../support/http'
import { demoPassword } from '../support/env'
import { contextFor, DEMO_CSV, projectWithNetwork } from './adjustments-fixture'
import { finishedRun } from './signoffs-fixture'

const state = vi.hoisted(() => ({ refuse: false }))
vi.mock('../../server/services/run-queue', async (importOriginal) => {
  const real = await importOriginal<typeof import('../../server/services/run-queue')>()
  return {
    ...real,
    sendAdjustJob: async (...args: Parameters<typeof real.sendAdjustJob>) => {
      if (state.refuse) throw new Error('the queue refused the job (test)')
      return real.sendAdjustJob(...args)
    },
  }
})

const queue = `integrity-test-${process.pid}`
let fx: Awaited<ReturnType<typeof projectWithNetwork>>
beforeAll(async () => { fx = await projectWithNetwork(DEMO.firm, 'Queue integrity', DEMO_CSV) })
afterAll(async () => {
  state.refuse = false
  await stopBoss()
  await closeDb()
})

const project = async () => (await useDb().select().from(projects).where(eq(projects.id, fx.projectId)))[0]!
const runsOf = async () => useDb().select().from(adjustments).where(eq(adjustments.projectId, fx.projectId)).orderBy(adjustments.number)
const jobsFor = async (runId: number) =>
  (await usePool().query<{ state: string; name: string }>(`select state, name from pgboss.job where data->>'adjustmentId' = $1`, [String(runId)])).rows

async function rejection(p: Promise<unknown>): Promise<DomainError> {
  const e = await p.then(() => null, (x: unknown) => x)
  expect(e).toBeInstanceOf(DomainError)
  return e as DomainError
}

describe('a run and its job in one transaction', () => {
  it('a queue that refuses the job leaves no run and no audit entry', async () => {
    const ctx = await contextFor(DEMO.chief, DEMO.firm)
    const audits = async () => (await useDb().select({ n: sql<number>`count(*)::int` }).from(auditLog)
      .where(and(eq(auditLog.projectId, fx.projectId), eq(auditLog.action, 'adjustment.queue'))))[0]!.n
    const before = { runs: (await runsOf()).length, audits: await audits() }
    state.refuse = true
    try {
      const e = await rejection(queueRun(ctx, await project(), {}, { queue }))
      expect(e.statusCode).toBe(503)
      expect(e.message).toMatch(/nothing was saved/)
    } finally {
      state.refuse = false
    }
    expect({ runs: (await runsOf()).length, audits: await audits() }).toEqual(before)

    const ok = await queueRun(ctx, await project(), {}, { queue })
    const run = (await runsOf()).find((r) => r.number === ok.number)!
    expect(run.status).toBe('queued')
    expect(await jobsFor(run.id)).toEqual([{ state: 'created', name: queue }])
  })

  it('an exclusion is kept only if its re-run was queued', async () => {
    const ctx = await contextFor(DEMO.chief, DEMO.firm)
    const first = (await runsOf())[0]!
    const [obs] = await useDb().select().from(observations).where(and(eq(observations.projectId, fx.projectId), eq(observations.excluded, false))).limit(1)
    const runsBefore = (await runsOf()).length
    state.refuse = true
    try {
      expect((await rejection(excludeAndRerun(ctx, await project(), first.number, obs!.id, { queue }))).statusCode).toBe(503)
    } finally {
      state.refuse = false
    }
    const [still] = await useDb().select().from(observations).where(eq(observations.id, obs!.id))
    expect(still!.excluded).toBe(false)
    expect((await runsOf()).length).toBe(runsBefore)
    expect(await useDb().select().from(auditLog).where(and(eq(auditLog.action, 'observation.exclude'), eq(auditLog.entityId, String(obs!.id))))).toEqual([])

    const queued = await excludeAndRerun(ctx, await project(), first.number, obs!.id, { queue })
    const [now] = await useDb().select().from(observations).where(eq(observations.id, obs!.id))
    expect(now!.excluded).toBe(true)
    expect(queued.status).toBe('queued')
    expect((await runsOf()).length).toBe(runsBefore + 1)
  })
})

describe('the sweep of queued runs without a job', () => {
  it('sends a job again for a run queued without one, and fails one whose attempts are used up', async () => {
    const p = await project()
    const old = new Date(Date.now() - 10 * 60_000)
    const next = Math.max(...(await runsOf()).map((r) => r.number)) + 1
    const [lost] = await useDb().insert(adjustments).values({ firmId: fx.firmId, projectId: p.id, number: next, settings: {}, inputHash: 'lost', status: 'queued', createdAt: old }).returning()
    const [tired] = await useDb().insert(adjustments).values({ firmId: fx.firmId, projectId: p.id, number: next + 1, settings: {}, inputHash: 'tired', status: 'queued', createdAt: old, attempts: 3 }).returning()
    expect(await jobsFor(lost!.id)).toEqual([])

    const r = await sweepQueuedWithoutJob(queue, 60)
    expect(r.resent).toBeGreaterThanOrEqual(1)
    expect(r.failed).toBeGreaterThanOrEqual(1)
    expect(await jobsFor(lost!.id)).toEqual([{ state: 'created', name: queue }])
    const [t] = await useDb().select().from(adjustments).where(eq(adjustments.id, tired!.id))
    expect(t!.status).toBe('failed')
    expect(t!.errorText).toMatch(/tried as often as allowed/)
    // a second sweep finds the re-sent run's job and leaves it alone
    await sweepQueuedWithoutJob(queue, 60)
    expect(await jobsFor(lost!.id)).toHaveLength(1)
  })
})

describe('double submission', () => {
  let chief: Client, surveyor: Client
  let signed: Awaited<ReturnType<typeof finishedRun>>
  beforeAll(async () => {
    ;[chief, surveyor] = await Promise.all([as(DEMO.chief), as(DEMO.surveyor)])
    signed = await finishedRun(chief, 'Double submit')
  }, 120_000)

  it('two identical sign-offs sent at once make one record', async () => {
    const body = { statement: 'Certified once, submitted twice (test).', password: demoPassword, acknowledgeFailedTests: true }
    const path = `${signed.base}/adjustments/${signed.runNumber}/signoffs`
    const [a, b] = await Promise.all([surveyor.post(path, body), surveyor.post(path, body)])
    expect([a.status, b.status]).toEqual([201, 201])
    expect(a.body.id).toBe(b.body.id)
    expect(await useDb().select().from(signoffs).where(eq(signoffs.projectId, signed.projectId))).toHaveLength(1)
    // a different statement is a different sign-off
    const other = await surveyor.post(path, { ...body, statement: 'A second, deliberate sign-off (test).' })
    expect(other.status).toBe(201)
    expect(other.body.id).not.toBe(a.body.id)
  })

  it('two identical releases sent at once make one record', async () => {
    const [s] = await useDb().select().from(signoffs).where(eq(signoffs.projectId, signed.projectId)).orderBy(signoffs.id).limit(1)
    const [a, b] = await Promise.all([chief.post(`${signed.base}/releases`, { signoffId: s!.id }), chief.post(`${signed.base}/releases`, { signoffId: s!.id })])
    expect([a.status, b.status]).toEqual([201, 201])
    expect(a.body.id).toBe(b.body.id)
    expect(b.body.files.map((f: { sha256: string }) => f.sha256)).toEqual(a.body.files.map((f: { sha256: string }) => f.sha256))
    expect(await useDb().select().from(releases).where(eq(releases.signoffId, s!.id))).toHaveLength(1)
  })
})
