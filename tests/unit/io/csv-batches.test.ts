// The batched CSV reader (readObservationCsvBatches): the parser pauses after
// each batch, so an upload never holds every record at once. Files are written
// here by hand in the Tiepoint CSV format (docs/file-format.md); expected
// counts and line numbers are counted from how each file is built.
import { describe, expect, it } from 'vitest'
import { readObservationCsvBatches } from '../../../server/engine/io/csv'
import type { ObservationRecord } from '../../../server/engine/types'
import { drain } from './read-helpers'

const HEADER = 'kind,at,from,to,value,unit,sigma,hi,ht,set,length,note'


/** `n` horizontal distances A→Ti, one per line from line 3 (line 2 is a comment); every 7th with a note over two lines. */
function distances(n: number): string {
  const rows = [HEADER, '# invented test rows']
  for (let i = 0; i < n; i++) rows.push(`horizontal_distance,A,,T${i},${(100 + i / 1000).toFixed(3)},m,2,,,,,${i % 7 === 0 ? `"row ${i},\nsecond line"` : ''}`)
  return rows.join('\n') + '\n'
}

describe('readObservationCsvBatches', () => {
  it('hands out every row in batches of the asked size, with the lines an editor shows', () => {
    const { sizes, records, end } = drain(readObservationCsvBatches(distances(1000), {}, 128))
    expect(end.ok).toBe(true)
    expect(records).toHaveLength(1000)
    expect(sizes.length).toBeGreaterThan(5)
    for (const n of sizes.slice(0, -1)) expect(n).toBe(128)
    // row i starts at line 3 + i plus one extra line for each two-line note before it (rows 0, 7, 14, … below i)
    for (const i of [0, 1, 7, 8, 127, 128, 129, 999]) {
      const r = records[i]!
      expect(r.to).toBe(`T${i}`)
      expect(r.line).toBe(3 + i + Math.ceil(i / 7))
      if (i % 7 === 0) expect(r.note).toBe(`row ${i},\nsecond line`)
    }
  })

  it('gives out the first batch before it has read the rest of the file (it streams)', () => {
    const text = distances(2000) + 'horizontal_distance,A,,TX,12x.5,m,2,,,,,\n'
    const batches = readObservationCsvBatches(text, {}, 100)
    const first = batches.next()
    expect(first.done).toBe(false)
    expect((first.value as ObservationRecord[]).length).toBe(100)
    const rest = drain(batches)
    expect(rest.end.ok).toBe(false)
    if (!rest.end.ok) expect(rest.end.errors).toEqual([expect.objectContaining({ line: text.split('\n').length - 1, column: 'value' })])
  })

  it('stops handing out records at the first error but lists every error', () => {
    const lines = [HEADER]
    for (let i = 0; i < 300; i++) lines.push(`horizontal_distance,A,,T${i},${100 + i},m,2,,,,,`)
    lines[5] = 'horizontal_distance,A,,T3,abc,m,2,,,,,' // line 6
    lines[250] = 'teleport,A,,T9,1,m,,,,,,' // line 251
    const { records, end } = drain(readObservationCsvBatches(lines.join('\n'), {}, 50))
    expect(end.ok).toBe(false)
    if (!end.ok) expect(end.errors.map((e) => [e.line, e.column])).toEqual([[6, 'value'], [251, 'kind']])
    expect(records.length).toBeLessThan(50)
  })

  it('control rows come in the end, not in the batches; a file of only control says it holds no observations', () => {
    const text = [HEADER, 'control,K1,,,1000 2000,m,,,,,,', 'control,K2,,,1100 2000,m,,,,,,'].join('\n')
    const { records, end } = drain(readObservationCsvBatches(text, {}, 1))
    expect(records).toEqual([])
    expect(end.ok && end.controls.map((c) => c.station)).toEqual(['K1', 'K2'])
  })
})
