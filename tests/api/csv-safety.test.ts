// The streamed CSV exports escape formula-looking cells in SQL (safeCellSql) and
// the other exports in TypeScript (safeCell): both must give the same cell for
// every input (property; the rule itself is OWASP "CSV Injection").
import { afterAll, describe, expect, it } from 'vitest'
import { closeDb, usePool } from '../../server/db/client'
import { safeCell, safeCellSql } from '../../server/services/csv'

afterAll(() => closeDb())

describe('formula-safe CSV cells in SQL and in TypeScript', () => {
  it('PostgreSQL gives the same cell as safeCell for formulas, signed numbers and plain text', async () => {
    const cells = ['=1+2', '+x', '-x', '@SUM(A1)', '\tx', '\rx', '-5', '+3.2e4', '.5', '-.5e-3', '-', '+', '1-2', 'KF01', '', "o'clock", '=', '-1.', '12e', 'x=1']
    const { rows } = await usePool().query(`select ${safeCellSql('v')} as out from unnest($1::text[]) with ordinality as t(v, n) order by n`, [cells])
    expect(rows.map((r: { out: string }) => r.out)).toEqual(cells.map(safeCell))
    // and the rule does act: a formula is changed, a negative number is not
    expect(safeCell('=1+2')).toBe("'=1+2")
    expect(safeCell('-5')).toBe('-5')
  })
})
