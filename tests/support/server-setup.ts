// Vitest global setup: seed the fresh test database, start the built app and
// the adjustment worker, and stop them at the end. Skipped when only the unit
// suite runs (no DATABASE_URL) or TIEPOINT_NO_SERVER=1.
import { spawn, type ChildProcess } from 'node:child_process'
import { existsSync } from 'node:fs'
import { appPort, baseUrl, smtpPort } from './env'

const children: ChildProcess[] = []

async function waitForHealth(timeoutMs: number) {
  const until = Date.now() + timeoutMs
  while (Date.now() < until) {
    try {
      const res = await fetch(`${baseUrl}/api/health`)
      if (res.ok) return
    } catch { /* not up yet */ }
    await new Promise((r) => setTimeout(r, 300))
  }
  throw new Error(`the test app did not answer on ${baseUrl} within ${timeoutMs} ms`)
}

export async function setup() {
  const onlyUnit = process.argv.includes('--project') && process.argv[process.argv.indexOf('--project') + 1] === 'unit'
  if (!process.env.DATABASE_URL || process.env.TIEPOINT_NO_SERVER === '1' || onlyUnit) return
  const { seedDemo } = await import('../../server/db/seed')
  const { closeDb } = await import('../../server/db/client')
  const { stopBoss } = await import('../../server/services/run-queue')
  await seedDemo()
  await stopBoss()
  await closeDb()
  const env = {
    ...process.env,
    NODE_ENV: 'production',
    PORT: String(appPort),
    NITRO_PORT: String(appPort),
    HOST: '127.0.0.1',
    NITRO_HOST: '127.0.0.1',
    TIEPOINT_SMTP_PORT: String(smtpPort),
    TIEPOINT_PUBLIC_URL: baseUrl,
    AUTH_ORIGIN: `${baseUrl}/api/auth`,
  }
  const out = process.env.NUXT_OUTPUT_DIR || '.output'
  const app = spawn('node', [`${out}/server/index.mjs`], { env, stdio: ['ignore', 'inherit', 'inherit'] })
  children.push(app)
  if (existsSync('server/workers/run.ts')) {
    children.push(spawn('node', ['--import', 'tsx', 'server/workers/run.ts'], { env, stdio: ['ignore', 'inherit', 'inherit'] }))
  }
  await waitForHealth(60_000)
}

/** The started app's process id (the benchmarks read its peak memory from /proc), or null. */
export function appPid(): number | null {
  return children[0]?.pid ?? null
}

export async function teardown() {
  await Promise.all(children.map((c) => new Promise<void>((resolve) => {
    if (c.exitCode !== null) return resolve()
    const timer = setTimeout(() => { c.kill('SIGKILL'); resolve() }, 20_000)
    c.once('exit', () => { clearTimeout(timer); resolve() })
    c.kill('SIGTERM')
  })))
}
