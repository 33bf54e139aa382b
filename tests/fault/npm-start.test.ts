// Fault tests against a whole `npm start` of its own: its own PostgreSQL
// cluster (.data/pg-fault, made fresh), its own ports, the built app and one
// worker under the start script's supervision. In order:
//   1. kill -9 of the app during a 100,000-line upload: nothing half-saved,
//      the app is started again, and the same file then uploads;
//   2. kill -9 of the worker: it is started again;
//   3. PostgreSQL stopped for 10 s during a run: /api/health says db false,
//      then true; the app and worker keep their pids (no crash); the run ends
//      done or failed with a message, never stuck;
//   4. SIGTERM to the `npm start` process group: no process and no PostgreSQL
//      left, both ports closed.
// afterAll kills whatever is left, whatever happened.
import { spawn, execFileSync, type ChildProcess } from 'node:child_process'
import { createHash } from 'node:crypto'
import { existsSync, readFileSync, rmSync } from 'node:fs'
import net from 'node:net'
import { resolve } from 'node:path'
import pg from 'pg'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { as, DEMO, type Client } from '../support/http'

const ROOT = resolve(import.meta.dirname, '../..')
const testPg = Number(process.env.TIEPOINT_TEST_PG_PORT ?? 54339)
const testApp = Number(process.env.TIEPOINT_TEST_APP_PORT ?? 3939)
const PG_PORT = Number(process.env.TIEPOINT_FAULT_PG_PORT ?? testPg + 5)
const APP_PORT = Number(process.env.TIEPOINT_FAULT_APP_PORT ?? testApp + 5)
const CLUSTER = 'pg-fault'
const RUN_DIR = resolve(ROOT, '.data/run-fault')
const base = `http://127.0.0.1:${APP_PORT}`
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms))

/** The cluster's folder, as docker-free-scripts/lib.sh pg_data_dir chooses it. */
function dataDir(): string {
  const inside = resolve(ROOT, '.data', CLUSTER)
  if (existsSync(resolve(inside, 'PG_VERSION'))) return inside
  const key = createHash('sha256').update(ROOT).digest('hex').slice(0, 12)
  return `/var/tmp/tiepoint-${key}/${CLUSTER}`
}

const lib = (cmd: string) => execFileSync('bash', ['-c', `source docker-free-scripts/lib.sh; ${cmd}`], { cwd: ROOT, stdio: ['ignore', 'ignore', 'inherit'], timeout: 90_000 })
const pgDown = () => lib(`pg_down ${CLUSTER}`)
const pgUp = () => lib(`pg_up ${CLUSTER} ${PG_PORT}`)
const pgRunning = () => existsSync(resolve(dataDir(), 'postmaster.pid'))

const alive = (pid: number) => { try { process.kill(pid, 0); return true } catch { return false } }
const pidOf = (name: 'app' | 'worker') => Number(readFileSync(resolve(RUN_DIR, `${name}.pid`), 'utf8'))

function portOpen(port: number): Promise<boolean> {
  return new Promise((done) => {
    const s = net.connect({ host: '127.0.0.1', port }, () => { s.destroy(); done(true) })
    s.on('error', () => done(false))
  })
}

async function health(): Promise<{ status: number; db: boolean | null }> {
  try {
    const r = await fetch(`${base}/api/health`)
    return { status: r.status, db: ((await r.json()) as { db: boolean }).db }
  } catch {
    return { status: 0, db: null }
  }
}

async function until<T>(what: string, get: () => Promise<T>, ok: (v: T) => boolean, timeoutMs: number, everyMs = 250): Promise<T> {
  const end = Date.now() + timeoutMs
  let last: T | undefined
  while (Date.now() < end) {
    last = await get()
    if (ok(last)) return last
    await sleep(everyMs)
  }
  throw new Error(`${what}: still ${JSON.stringify(last)} after ${timeoutMs} ms`)
}

/** Superuser on the cluster's socket (trust), to watch what the app does and count rows. */
async function superuser<T>(fn: (c: pg.Client) => Promise<T>): Promise<T> {
  const c = new pg.Client({ host: dataDir(), port: PG_PORT, user: 'postgres', database: 'tiepoint' })
  await c.connect()
  try { return await fn(c) } finally { await c.end() }
}

let start: ChildProcess | undefined
let log = ''

function env(): NodeJS.ProcessEnv {
  const e: NodeJS.ProcessEnv = { ...process.env }
  for (const k of ['DATABASE_URL', 'DATABASE_OWNER_URL', 'TIEPOINT_LOCAL_DATABASE_URL', 'AUTH_ORIGIN', 'TIEPOINT_PUBLIC_URL', 'NITRO_PORT', 'NITRO_HOST', 'TIEPOINT_SEED_DEMO']) delete e[k]
  return {
    ...e,
    HOST: '127.0.0.1', PORT: String(APP_PORT), TIEPOINT_PG_PORT: String(PG_PORT), TIEPOINT_PG_CLUSTER: CLUSTER,
    TIEPOINT_SMTP_PORT: String(APP_PORT + 1000), TIEPOINT_RUN_DIR: RUN_DIR,
    // the worker sweeps every 3 s and holds each run 6 s, so a run is surely mid-way when PostgreSQL stops
    TIEPOINT_SWEEP_SECONDS: '3', TIEPOINT_WORKER_TEST_DELAY_MS: '6000',
  }
}

function killEverything() {
  if (start?.pid && start.exitCode === null) { try { process.kill(-start.pid, 'SIGKILL') } catch { /* gone */ } }
  for (const n of ['app', 'worker'] as const) {
    try { const p = pidOf(n); process.kill(-p, 'SIGKILL') } catch { /* gone */ }
  }
  try { pgDown() } catch { /* nothing to stop */ }
}

// A 100,000-line file (header + 99,999 distances between invented stations).
function bigCsv(): Buffer {
  const lines = ['kind,at,from,to,value,unit,sigma,hi,ht,set,length,note']
  for (let i = 1; i < 100_000; i++) lines.push(`horizontal_distance,F${i % 997},,F${(i * 7) % 991 + 1000},${(100 + (i % 5000) / 7).toFixed(4)},m,2,,,,,`)
  return Buffer.from(lines.join('\n') + '\n')
}
const upload = (c: Client, project: number, bytes: Buffer) => {
  const form = new FormData()
  form.append('file', new Blob([new Uint8Array(bytes)]), 'big.csv')
  return c.post(`/api/firms/${DEMO.firm}/projects/${project}/observation-sets`, form)
}

beforeAll(async () => {
  killEverything()
  rmSync(dataDir(), { recursive: true, force: true })
  rmSync(RUN_DIR, { recursive: true, force: true })
  start = spawn('npm', ['start'], { cwd: ROOT, env: env(), detached: true, stdio: ['ignore', 'pipe', 'pipe'] })
  const keep = (d: Buffer) => { log += d.toString() }
  start.stdout!.on('data', keep)
  start.stderr!.on('data', keep)
  await until('npm start comes up', health, (h) => h.status === 200, 150_000, 500)
}, 180_000)

afterAll(() => {
  killEverything()
  if (process.env.TIEPOINT_FAULT_LOG) console.log(log)
})

describe('npm start under faults', () => {
  let chief: Client
  let project: number

  it('kill -9 of the app during a 100,000-line upload saves nothing; the app comes back and the same file uploads', async () => {
    chief = await as(DEMO.chief, undefined, base)
    const p = await chief.post(`/api/firms/${DEMO.firm}/projects`, { name: `Fault upload ${Date.now()}`, crs: 'local', units: 'm' })
    expect(p.status).toBe(201)
    project = p.body.id
    const bytes = bigCsv()
    expect(bytes.toString().split('\n').length - 1).toBe(100_000)
    const app = pidOf('app')

    // kill it while the observations stream into the database (one watching connection, polled fast)
    await superuser(async (watch) => {
      const pending = upload(chief, project, bytes).then((r) => r.status, (e: Error) => e)
      await until('the upload reaches COPY', async () =>
        (await watch.query(`select count(*)::int as n from pg_stat_activity where query ilike 'copy observations%' and state = 'active'`)).rows[0].n as number, (n) => n > 0, 60_000, 5)
      process.kill(app, 'SIGKILL')
      expect(await pending).toBeInstanceOf(Error)
    })

    const counts = () => superuser(async (c) => (await c.query(
      `select (select count(*)::int from observation_sets where project_id = $1) as sets,
              (select count(*)::int from observations where project_id = $1) as obs,
              (select count(*)::int from stations where project_id = $1) as stations`, [project])).rows[0])
    // the killed connection's transaction is rolled back by the server
    await until('nothing of the upload is left', counts, (c) => c.sets === 0 && c.obs === 0 && c.stations === 0, 15_000)

    const back = await until('the app is started again', async () => ({ h: await health(), pid: pidOf('app') }), (x) => x.h.status === 200 && x.pid !== app, 60_000, 500)
    expect(alive(back.pid)).toBe(true)
    expect(log).toMatch(/app \(pid \d+\) exited with status \d+ .*starting it again/)
    const again = await upload(chief, project, bytes)
    expect(again.status).toBe(201)
    expect(again.body.observations).toBe(99_999)
    expect(await counts()).toMatchObject({ sets: 1, obs: 99_999 })
  }, 180_000)

  it('kill -9 of the worker: it is started again', async () => {
    const worker = pidOf('worker')
    process.kill(worker, 'SIGKILL')
    const next = await until('the worker is started again', async () => pidOf('worker'), (p) => p !== worker && alive(p), 30_000, 250)
    expect(alive(worker)).toBe(false)
    expect(next).not.toBe(worker)
  }, 60_000)

  it('PostgreSQL stopped for 10 s during a run: health says db false then true, nothing crashes, and the run ends done or failed', async () => {
    const demo = await chief.get(`/api/firms/${DEMO.firm}/projects`)
    const seeded = demo.body.find((p: { id: number; name: string }) => p.id !== project)
    const runs = `/api/firms/${DEMO.firm}/projects/${seeded.id}/adjustments`
    const q = await chief.post(runs, {})
    expect(q.status).toBe(202)
    const status = async () => (await chief.get(`${runs}/${q.body.number}/status`)).body
    await until('the run starts', status, (s) => s.status === 'running', 60_000)
    const pids = { app: pidOf('app'), worker: pidOf('worker') }

    pgDown()
    const stoppedAt = Date.now()
    expect(await until('health reports the database down', health, (h) => h.db === false, 10_000)).toEqual({ status: 503, db: false })
    await sleep(Math.max(0, 10_000 - (Date.now() - stoppedAt)))
    pgUp()
    expect(await until('health reports the database back', health, (h) => h.db === true, 30_000)).toEqual({ status: 200, db: true })

    const end = await until('the run ends', status, (s) => s.status === 'done' || s.status === 'failed', 120_000, 500)
    if (end.status === 'failed') expect(end.errorText).toBeTruthy()
    // neither process crashed on the lost connections
    expect({ app: pidOf('app'), worker: pidOf('worker') }).toEqual(pids)
    expect(alive(pids.app) && alive(pids.worker)).toBe(true)
    expect(log).not.toMatch(/Unhandled 'error' event/)
  }, 200_000)

  it('SIGTERM to the npm start process group leaves no process, no PostgreSQL and no open port', async () => {
    const pids = [pidOf('app'), pidOf('worker')]
    const group = start!.pid!
    const inGroup = () => execFileSync('ps', ['-eo', 'pid=,pgid='], { encoding: 'utf8' }).split('\n')
      .map((l) => l.trim().split(/\s+/).map(Number)).filter(([pid, pgid]) => pgid === group && pid !== undefined).map(([pid]) => pid)
    const exited = new Promise<number | null>((done) => start!.once('exit', (code) => done(code)))
    process.kill(-group, 'SIGTERM')
    await Promise.race([exited, sleep(60_000)])
    expect(start!.exitCode ?? start!.signalCode).not.toBeNull()
    // the stop is bounded: within 45 s nothing of it is left
    await until('everything has stopped', async () => ({ group: inGroup(), children: pids.filter(alive), pg: pgRunning() }),
      (x) => x.group.length === 0 && x.children.length === 0 && !x.pg, 45_000, 250)
    for (const p of pids) expect(alive(p)).toBe(false)
    expect(inGroup()).toEqual([])
    expect(pgRunning()).toBe(false)
    expect(await portOpen(APP_PORT)).toBe(false)
    expect(await portOpen(PG_PORT)).toBe(false)
    expect(log).toMatch(/stopping PostgreSQL \(pg-fault\)/)
  }, 90_000)
})
