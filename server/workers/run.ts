// The adjustment worker: takes queued runs from pg-boss and computes them.
// Start more with `npm run worker` (this or another host, same DATABASE_URL).
// On start and every 30 s it sweeps runs left `running` by a worker that died,
// and sends a job again for a run left `queued` without one.
// It survives a PostgreSQL restart: lost connections are logged and replaced
// (server/db/client.ts), queue errors are logged, and the sweep picks up the
// run that was being computed.
// Env: TIEPOINT_QUEUE (default 'adjust'), TIEPOINT_SWEEP_SECONDS (default 30),
// TIEPOINT_WORKER_TEST_DELAY_MS (tests only).
import type PgBoss from 'pg-boss'
import { closeDb } from '../db/client'
import { processRun, sweepQueuedWithoutJob, sweepStuckRuns } from '../services/adjustments'
import { ADJUST_QUEUE, ensureQueue, stopBoss, useBoss, type AdjustJob } from '../services/run-queue'

const queue = process.env.TIEPOINT_QUEUE || ADJUST_QUEUE
const log = (...a: unknown[]) => console.error('[tiepoint worker]', ...a)
const sweepSeconds = Number(process.env.TIEPOINT_SWEEP_SECONDS ?? 30)

/** A lost or refused database connection (server restarting, network), as opposed to a bug. */
function isConnectionError(e: unknown): boolean {
  const err = e as { code?: unknown; message?: unknown } | null
  const code = typeof err?.code === 'string' ? err.code : ''
  return ['ECONNREFUSED', 'ECONNRESET', 'EPIPE', 'ETIMEDOUT', '57P01', '57P02', '57P03'].includes(code) || code.startsWith('08')
    || /Connection terminated|connection timeout|Client has encountered a connection error/i.test(String(err?.message ?? ''))
}

// pg-boss 10.4 completes and fails a job without awaiting the promise
// (manager.js, onFetch): while the database is away that promise rejects
// with nobody to catch it, and Node ends the process. Such a lost
// connection is logged and the worker carries on (the sweep puts the run
// back in the queue once the database is back); anything else still ends the
// process, and `npm start` starts a new one.
process.on('unhandledRejection', (e) => {
  if (isConnectionError(e)) {
    log('database unavailable:', (e as Error).message)
    return
  }
  log('unexpected error, stopping:', e)
  process.exit(1)
})

async function sweep(boss: PgBoss) {
  const r = await sweepStuckRuns(async (name, id) => { await boss.fail(name, id, { reason: 'worker stopped' }) })
  if (r.requeued || r.failed) log(`swept stuck runs: ${r.requeued} queued again, ${r.failed} failed`)
  const q = await sweepQueuedWithoutJob(queue, Math.max(60, sweepSeconds))
  if (q.resent || q.failed) log(`swept queued runs without a job: ${q.resent} sent again, ${q.failed} failed`)
}

async function main() {
  const boss = await useBoss({ work: true })
  await ensureQueue(boss, queue)
  await sweep(boss)
  const timer = setInterval(() => { sweep(boss).catch((e) => log('sweep failed:', e.message)) }, sweepSeconds * 1000)
  await boss.work<AdjustJob>(queue, { batchSize: 1, pollingIntervalSeconds: 0.5, includeMetadata: true }, async ([job]) => {
    if (!job) return
    const final = job.retryCount >= job.retryLimit
    const out = await processRun(job.data, { final })
    log(`run ${job.data.adjustmentId}: ${out.status}${out.reason ? ` (${out.reason})` : ''}`)
  })
  log(`working on queue '${queue}' (pid ${process.pid})`)

  let stopping = false
  const stop = async () => {
    if (stopping) return
    stopping = true
    clearInterval(timer)
    log('stopping')
    await stopBoss()
    await closeDb()
    process.exit(0)
  }
  process.on('SIGTERM', stop)
  process.on('SIGINT', stop)
}

main().catch((e) => {
  log('could not start:', e)
  process.exit(1)
})
