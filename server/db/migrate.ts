// Applies the committed Drizzle migrations, then the SQL files in server/db/sql
// (functions and triggers written by hand, each idempotent), in one run.
import { readdirSync, readFileSync } from 'node:fs'
import { dirname, join } from 'node:path'
import { fileURLToPath } from 'node:url'
import { migrate } from 'drizzle-orm/node-postgres/migrator'
import { closeDb, useDb, usePool } from './client'

const here = dirname(fileURLToPath(import.meta.url))

export async function runMigrations(): Promise<void> {
  await migrate(useDb(), { migrationsFolder: join(here, 'migrations') })
  const sqlDir = join(here, 'sql')
  for (const file of readdirSync(sqlDir).filter((f) => f.endsWith('.sql')).sort()) {
    await usePool().query(readFileSync(join(sqlDir, file), 'utf8'))
  }
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  runMigrations()
    .then(() => console.error('[tiepoint] database migrated'))
    .catch((error) => {
      console.error('[tiepoint] migration failed:', error)
      process.exitCode = 1
    })
    .finally(() => closeDb())
}
