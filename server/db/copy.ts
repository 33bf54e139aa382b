// COPY FROM STDIN on a drizzle transaction's own connection, and the text
// format's cell encoders (PostgreSQL docs, "COPY — File Formats — Text
// Format"): tab-separated columns, newline-terminated rows, \N for null, and
// a backslash before any backslash, tab, newline or carriage return.
import { Readable } from 'node:stream'
import { pipeline } from 'node:stream/promises'
import type { ClientBase } from 'pg'
import { from as copyFrom } from 'pg-copy-streams'
import type { Tx } from './client'

const COPY_SPECIAL = /[\\\t\n\r]/
const COPY_ESCAPES: Record<string, string> = { '\\': '\\\\', '\t': '\\t', '\n': '\\n', '\r': '\\r' }

/** A text value in COPY text format. */
export function copyText(v: string | null | undefined): string {
  if (v === null || v === undefined) return '\\N'
  return COPY_SPECIAL.test(v) ? v.replace(/[\\\t\n\r]/g, (c) => COPY_ESCAPES[c]!) : v
}

/** A float8 in COPY text format; String() round-trips a double exactly. A non-finite value is refused. */
export function copyNumber(v: number | null | undefined): string {
  if (v === null || v === undefined) return '\\N'
  if (!Number.isFinite(v)) throw new Error(`value ${v} is not a finite number`)
  return String(v)
}

/** A float8 that may be missing or not finite (a statistic that could not be computed): stored as null. */
export function copyStat(v: number | null | undefined): string {
  return v === null || v === undefined || !Number.isFinite(v) ? '\\N' : String(v)
}

export const copyBool = (v: boolean | null | undefined): string => (v === null || v === undefined ? '\\N' : v ? 't' : 'f')

/**
 * The pg client a drizzle node-postgres transaction runs on. Drizzle keeps it
 * in a private field of the session (drizzle-orm 0.45, pinned); the check
 * turns a future change there into a clear error instead of a write outside
 * the transaction.
 */
export function clientOf(tx: Tx): ClientBase {
  const client = (tx._.session as unknown as { client?: unknown }).client
  if (typeof (client as { query?: unknown } | undefined)?.query !== 'function') {
    throw new Error('cannot reach the transaction\'s pg client for COPY (drizzle-orm internals changed)')
  }
  return client as ClientBase
}

/** Rows per chunk pushed into a COPY stream: big enough to keep syscalls few, small enough to keep memory flat. */
export const COPY_ROWS_PER_CHUNK = 2_000

/** Joins the rows a generator makes into chunks of COPY_ROWS_PER_CHUNK lines. */
export function* chunked<T>(items: Iterable<T>, line: (item: T) => string): Generator<string> {
  let chunk = ''
  let n = 0
  for (const it of items) {
    chunk += line(it)
    if (++n % COPY_ROWS_PER_CHUNK === 0) {
      yield chunk
      chunk = ''
    }
  }
  if (chunk !== '') yield chunk
}

/**
 * COPY `table (columns)` FROM STDIN on the transaction's connection, so a
 * failure rolls back with the rest of the transaction. Rows are made as the
 * server takes them (the stream's back-pressure), never as one big string.
 */
export async function copyInto(tx: Tx, table: string, columns: string, chunks: Iterable<string>): Promise<void> {
  const client = clientOf(tx)
  const sink = client.query(copyFrom(`copy ${table} (${columns}) from stdin with (format text)`))
  await pipeline(Readable.from(chunks, { objectMode: false }), sink)
}
