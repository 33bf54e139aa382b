// The one PostgreSQL pool of a process (app server, worker, scripts).
import { drizzle } from 'drizzle-orm/node-postgres'
import pg from 'pg'
import * as schema from './schema'

export type Db = ReturnType<typeof makeDb>
export type Tx = Parameters<Parameters<Db['transaction']>[0]>[0]

function makeDb(pool: pg.Pool) {
  return drizzle({ client: pool, schema, casing: 'snake_case' })
}

let pool: pg.Pool | undefined
let db: Db | undefined

/** The runtime role's connection: what the app, the worker and the seed use. */
export function databaseUrl(): string {
  const url = process.env.DATABASE_URL
  if (!url) throw new Error('DATABASE_URL is not set: start Tiepoint with `npm start` or set it to a PostgreSQL database')
  return url
}

/** The owner role's connection (migrations, audit verification); the runtime URL when only one role is configured. */
export function ownerDatabaseUrl(): string {
  return process.env.DATABASE_OWNER_URL || databaseUrl()
}

const logLost = (e: Error) => console.error('[tiepoint] database connection lost:', e.message)

/**
 * A pool that survives a PostgreSQL restart: a connection the server ends
 * (idle in the pool or checked out between queries) emits 'error', which with
 * no listener would stop the whole process. The pool drops such connections
 * and the next query opens a fresh one.
 */
export function makePool(connectionString: string, max: number): pg.Pool {
  const p = new pg.Pool({ connectionString, max, connectionTimeoutMillis: 10_000 })
  p.on('error', logLost)
  p.on('connect', (client) => { client.on('error', logLost) })
  return p
}

export function usePool(): pg.Pool {
  pool ??= makePool(databaseUrl(), Number(process.env.TIEPOINT_DB_POOL ?? 10))
  return pool
}

export function useDb(): Db {
  db ??= makeDb(usePool())
  return db
}

/** A separate Drizzle handle on any pool (the owner's, in migrations and checks). */
export function dbOn(p: pg.Pool): Db {
  return makeDb(p)
}

export async function closeDb(): Promise<void> {
  const p = pool
  pool = undefined
  db = undefined
  await p?.end()
}

/**
 * The pg client a drizzle node-postgres transaction runs on, so that work done
 * by another library (COPY, the job queue's insert) joins the transaction.
 * Drizzle keeps it in a private field of the session (drizzle-orm 0.45,
 * pinned); the check turns a future change there into a clear error instead
 * of a write outside the transaction.
 */
export function txClient(tx: Tx): pg.ClientBase {
  const client = (tx._.session as unknown as { client?: unknown }).client
  if (typeof (client as { query?: unknown } | undefined)?.query !== 'function') {
    throw new Error('cannot reach the transaction\'s pg client (drizzle-orm internals changed)')
  }
  return client as pg.ClientBase
}
