// Applies the committed Drizzle migrations, then the SQL files in server/db/sql
// (functions and triggers written by hand, each idempotent), then the runtime
// role's rights and the queue schema (server/db/roles.ts), in one run.
// Connects as the owner role (DATABASE_OWNER_URL); with only DATABASE_URL set
// (one role for everything, e.g. an external database) the grants are skipped.
import { readdirSync, readFileSync } from 'node:fs'
import { dirname, join } from 'node:path'
import { fileURLToPath } from 'node:url'
import { migrate } from 'drizzle-orm/node-postgres/migrator'
import { dbOn, makePool, ownerDatabaseUrl } from './client'
import { backfillAuditChain } from '../services/audit'
import { ensureQueueSchema, grantRuntimeRole, roleOf } from './roles'

const here = dirname(fileURLToPath(import.meta.url))
const log = (...a: unknown[]) => console.error('[tiepoint]', ...a)

export async function runMigrations(): Promise<void> {
  const ownerUrl = ownerDatabaseUrl()
  const pool = makePool(ownerUrl, 2)
  try {
    const db = dbOn(pool)
    await migrate(db, { migrationsFolder: join(here, 'migrations') })
    const sqlDir = join(here, 'sql')
    for (const file of readdirSync(sqlDir).filter((f) => f.endsWith('.sql')).sort()) {
      await pool.query(readFileSync(join(sqlDir, file), 'utf8'))
    }
    const chained = await backfillAuditChain(db)
    if (chained) log(`audit log: ${chained} earlier entries linked into the hash chain`)
    const runtime = process.env.DATABASE_URL ? roleOf(process.env.DATABASE_URL) : null
    if (runtime && runtime !== roleOf(ownerUrl)) {
      const client = await pool.connect()
      try {
        await grantRuntimeRole(client, runtime)
        const q = await ensureQueueSchema(client, runtime)
        if (q === 'rebuilt') log('job queue schema rebuilt for the runtime role; queued runs are sent again by the worker')
      } finally {
        client.release()
      }
    }
  } finally {
    await pool.end()
  }
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  runMigrations()
    .then(() => log('database migrated'))
    .catch((error) => {
      log('migration failed:', error)
      process.exitCode = 1
    })
}
