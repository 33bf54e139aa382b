// The adjustment worker survives being killed mid-run: the run is retried by a
// new worker or marked failed, never left `running`. The test runs its own
// worker processes on a queue of their own, so the suite's worker stays out.
import { spawn, type ChildProcess } from 'node:child_process'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { and, eq } from 'drizzle-orm'
import { closeDb, useDb } from '../../server/db/client'
import { adjustments, projects } from '../../server/db/schema'
import { queueRun } from '../../server/services/adjustments'
import { stopBoss } from '../../server/services/run-queue'
import { DEMO } from '../support/http'
import { contextFor, DEMO_CSV, projectWithNetwork, waitForRun } from './adjustments-fixture'

const queue = `adjust-test-${process.pid}`
const workers: ChildProcess[] = []

function startWorker(extra: Record<string, string> = {}): ChildProcess {
  const w = spawn('node', ['--import', 'tsx', 'server/workers/run.ts'], {
    env: { ...process.env, TIEPOINT_QUEUE: queue, ...extra }, stdio: ['ignore', 'inherit', 'inherit'],
  })
  workers.push(w)
  return w
}

const runStatus = async (id: number) => {
  const [r] = await useDb().select().from(adjustments).where(eq(adjustments.id, id))
  return r!
}

let fx: Awaited<ReturnType<typeof projectWithNetwork>>
beforeAll(async () => { fx = await projectWithNetwork(DEMO.firm, 'Worker suite', DEMO_CSV) })
afterAll(async () => {
  for (const w of workers) if (w.exitCode === null) w.kill('SIGKILL')
  await stopBoss()
  await closeDb()
})

describe('a worker killed mid-run', () => {
  it('leaves the run to be retried by the next worker (or failed), never running', async () => {
    const ctx = await contextFor(DEMO.chief, DEMO.firm)
    const [project] = await useDb().select().from(projects).where(eq(projects.id, fx.projectId))
    const queued = await queueRun(ctx, project!, {}, { queue })
    const [row] = await useDb().select().from(adjustments).where(and(eq(adjustments.projectId, fx.projectId), eq(adjustments.number, queued.number)))
    const id = row!.id

    // the first worker holds the run for a minute, so it is surely mid-run when killed
    const slow = startWorker({ TIEPOINT_WORKER_TEST_DELAY_MS: '60000' })
    await waitForRun(() => runStatus(id), 30_000, (s) => s === 'running')
    slow.kill('SIGKILL')
    await new Promise((r) => slow.once('exit', r))
    expect((await runStatus(id)).status).toBe('running')

    // a new worker sweeps the orphan on start: the job is failed into pg-boss's retry and computed again
    startWorker()
    const final = await waitForRun(() => runStatus(id), 60_000)
    const run = await runStatus(id)
    expect(['done', 'failed']).toContain(final)
    expect(run.status).not.toBe('running')
    expect(run.attempts).toBeGreaterThanOrEqual(2)
    if (final === 'done') expect(run.summary).not.toBeNull()
    else expect(run.errorText).toMatch(/worker/)
  }, 120_000)
})
