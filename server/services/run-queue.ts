// The adjustment job queue: pg-boss on the application's own database. One
// lazily started instance per process (app server, worker, tests).
import PgBoss from 'pg-boss'
import { databaseUrl } from '../db/client'

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

export async function sendAdjustJob(job: AdjustJob, queue = ADJUST_QUEUE): Promise<string | null> {
  const boss = await useBoss()
  await ensureQueue(boss, queue)
  return boss.send(queue, job as unknown as object, jobPolicy())
}

export async function stopBoss(): Promise<void> {
  const b = booting
  booting = undefined
  created.clear()
  if (b) await (await b).stop({ graceful: false, wait: true }).catch(() => undefined)
}
