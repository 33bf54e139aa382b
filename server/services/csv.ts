// CSV cells that a spreadsheet would run as a formula. A cell starting with
// = + - @ (or a tab or carriage return) is prefixed with an apostrophe, which
// spreadsheets show as text (OWASP, "CSV Injection"). Plain numbers keep their
// sign: a negative coordinate stays a number.
const FORMULA_START = /^[=+\-@\t\r]/
const PLAIN_NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/

export function safeCell(v: unknown): string {
  if (v === null || v === undefined) return ''
  const s = String(v)
  return FORMULA_START.test(s) && !PLAIN_NUMBER.test(s) ? `'${s}` : s
}

/** The same over every value of every row (objects or arrays), before quoting. */
export function safeRows<T extends Record<string, unknown> | unknown[]>(rows: T[]): T[] {
  return rows.map((r) => (Array.isArray(r)
    ? r.map((v) => (typeof v === 'string' ? safeCell(v) : v))
    : Object.fromEntries(Object.entries(r).map(([k, v]) => [k, typeof v === 'string' ? safeCell(v) : v]))) as T)
}

/**
 * safeCell as a PostgreSQL expression over a text column, for exports streamed
 * straight out of COPY. PostgreSQL's regular expressions read both patterns the
 * same way (\d, \t, \r and the escaped - inside brackets are valid there), so the
 * rule has one definition.
 */
export function safeCellSql(column: string): string {
  return `case when ${column} ~ '${FORMULA_START.source}' and ${column} !~ '${PLAIN_NUMBER.source}' then '''' || ${column} else ${column} end`
}
