// The adjustment job queue: pg-boss on the application's own database. One
// lazily started instance per process (app server, worker, tests).
import PgBoss from 'pg-boss'
import { databaseUrl, txClient, type Tx } from '../db/client'

export const ADJUST_QUEUE = 'adjust'

export interface AdjustJob {
  adjustmentId: number
  firmId: number
  projectId: number
}

/**
 * Job policy: a job whose worker vanished expires and is retried; after the
 * retries the run is marked failed by the worker's sweep (never left running).
 */
export const jobPolicy = () => ({
  retryLimit: Number(process.env.TIEPOINT_RUN_RETRIES ?? 2),
  retryDelay: 2,
  expireInSeconds: Number(process.env.TIEPOINT_RUN_EXPIRE_SECONDS ?? 900),
})

let booting: Promise<PgBoss> | undefined
const created = new Set<string>()

/** `work` = this process also supervises (expiry, maintenance); the app server only sends. */
export function useBoss(opts: { work?: boolean } = {}): Promise<PgBoss> {
  booting ??= (async () => {
    const boss = new PgBoss({
      connectionString: databaseUrl(),
      max: 4,
      supervise: !!opts.work,
      schedule: false,
      ...(opts.work ? { maintenanceIntervalSeconds: 30 } : {}),
    })
    boss.on('error', (e) => console.error('[tiepoint] queue error:', e.message))
    await boss.start()
    return boss
  })().catch((e) => {
    booting = undefined
    throw e
  })
  return booting
}

export async function ensureQueue(boss: PgBoss, name: string): Promise<void> {
  if (created.has(name)) return
  await boss.createQueue(name, { name, ...jobPolicy() })
  created.add(name)
}

/** Makes sure the queue exists (pg-boss's own connection); call before a transaction that sends to it. */
export async function readyQueue(queue = ADJUST_QUEUE): Promise<PgBoss> {
  const boss = await useBoss()
  await ensureQueue(boss, queue)
  return boss
}

/**
 * Sends a job. With `tx` the job row is written on that transaction's own
 * connection, so the run and its job are committed together or not at all.
 */
export async function sendAdjustJob(job: AdjustJob, queue = ADJUST_QUEUE, tx?: Tx): Promise<string | null> {
  const boss = await readyQueue(queue)
  const db = tx ? { executeSql: (text: string, values?: unknown[]) => txClient(tx).query(text, values) } : undefined
  const id = await boss.send(queue, job as unknown as object, { ...jobPolicy(), ...(db ? { db } : {}) })
  if (!id) throw new Error(`the job queue '${queue}' did not take the job of run ${job.adjustmentId}`)
  return id
}

export async function stopBoss(): Promise<void> {
  const b = booting
  booting = undefined
  created.clear()
  if (b) await (await b).stop({ graceful: false, wait: true }).catch(() => undefined)
}
