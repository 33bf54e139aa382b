// Least privilege: two database roles.
//
// - The owner role (DATABASE_OWNER_URL, 'tiepoint' in the local cluster) owns
//   the schema and runs the migrations. Nothing else connects as it.
// - The runtime role (DATABASE_URL, 'tiepoint_app') is what the app, the
//   worker and the seed connect as: it reads and writes rows, but cannot
//   change the schema, and for sign-offs and the audit log it may only INSERT
//   and SELECT (a legal record is never edited or removed). TRUNCATE of either
//   table is refused by a trigger for every role (server/db/sql/).
//   It owns one schema of its own, 'pgboss', because the job queue creates a
//   table per queue at run time.
//
// Applied by server/db/migrate.ts after every migration, so it is idempotent
// and covers tables that later migrations add.
import type pg from 'pg'
import PgBoss from 'pg-boss'

/** Tables whose rows the runtime role may add and read, never change or delete. */
export const APPEND_ONLY_TABLES = ['signoffs', 'audit_log'] as const

export const QUEUE_SCHEMA = 'pgboss'

const ident = (s: string) => `"${s.replace(/"/g, '""')}"`

/** The role name in a postgres:// URL. */
export function roleOf(url: string): string {
  return decodeURIComponent(new URL(url).username)
}

export async function grantRuntimeRole(client: pg.ClientBase, role: string): Promise<void> {
  const r = ident(role)
  await client.query(`
    GRANT USAGE ON SCHEMA public TO ${r};
    REVOKE ALL ON ALL TABLES IN SCHEMA public FROM ${r};
    GRANT SELECT, INSERT, UPDATE, DELETE ON ALL TABLES IN SCHEMA public TO ${r};
    REVOKE UPDATE, DELETE ON ${APPEND_ONLY_TABLES.map(ident).join(', ')} FROM ${r};
    GRANT USAGE, SELECT ON ALL SEQUENCES IN SCHEMA public TO ${r};
  `)
}

/**
 * The queue's schema, owned by the runtime role and installed on its behalf
 * (the owner role is a member of it). pg-boss's own installer would first run
 * CREATE SCHEMA, which needs a database privilege the runtime role does not
 * have, so the schema is made here and the rest of the installer runs with
 * SET ROLE. A queue schema left from before the roles split (owned by
 * someone else) is rebuilt: the worker's sweep sends jobs again for runs
 * that were queued.
 */
export async function ensureQueueSchema(client: pg.ClientBase, role: string): Promise<'ready' | 'installed' | 'rebuilt'> {
  const { rows } = await client.query<{ owner: string }>(`select nspowner::regrole::text as owner from pg_namespace where nspname = $1`, [QUEUE_SCHEMA])
  let outcome: 'installed' | 'rebuilt' = 'installed'
  if (rows[0]) {
    const owner = rows[0].owner.replace(/^"|"$/g, '')
    if (owner === role) {
      const v = await client.query(`select to_regclass('${QUEUE_SCHEMA}.version') as t`)
      if (v.rows[0].t) return 'ready'
    } else {
      await client.query(`DROP SCHEMA ${ident(QUEUE_SCHEMA)} CASCADE`)
      outcome = 'rebuilt'
    }
  }
  await client.query(`CREATE SCHEMA IF NOT EXISTS ${ident(QUEUE_SCHEMA)} AUTHORIZATION ${ident(role)}`)
  const plans = PgBoss.getConstructionPlans(QUEUE_SCHEMA)
  const withoutSchema = plans.replace(/CREATE SCHEMA IF NOT EXISTS pgboss\s*;?/, '')
  if (withoutSchema === plans) throw new Error('pg-boss construction plans changed: cannot install the queue schema for the runtime role')
  await client.query(`SET ROLE ${ident(role)}`)
  try {
    await client.query(withoutSchema)
  } finally {
    await client.query('RESET ROLE')
  }
  return outcome
}
