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

export function databaseUrl(): string {
  const url = process.env.DATABASE_URL
  if (!url) throw new Error('DATABASE_URL is not set: start Tiepoint with `npm start` or set it to a PostgreSQL database')
  return url
}

export function usePool(): pg.Pool {
  pool ??= new pg.Pool({ connectionString: databaseUrl(), max: Number(process.env.TIEPOINT_DB_POOL ?? 10) })
  return pool
}

export function useDb(): Db {
  db ??= makeDb(usePool())
  return db
}

export async function closeDb(): Promise<void> {
  const p = pool
  pool = undefined
  db = undefined
  await p?.end()
}
