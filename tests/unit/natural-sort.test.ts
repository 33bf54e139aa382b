// Natural order of station names (shared/natural-sort.ts): digit runs by value.
// Expected orders written by hand (common practice for point numbering).
import { describe, expect, it } from 'vitest'
import { naturalCompare, naturalSortBy } from '../../shared/natural-sort'

describe('natural order of station names', () => {
  it('puts KF2 before KF10 and P9 before P10 before P100', () => {
    expect(['KF10', 'KF2', 'KF1', 'P100', 'P9', 'P10'].sort(naturalCompare)).toEqual(['KF1', 'KF2', 'KF10', 'P9', 'P10', 'P100'])
  })
  it('compares every digit run, not only the last: 2-10 after 2-9, 10-1 after 2-10', () => {
    expect(['10-1', '2-10', '2-9'].sort(naturalCompare)).toEqual(['2-9', '2-10', '10-1'])
  })
  it('orders names with the same value by their characters, so the order is total (KF02 before KF2, as PostgreSQL breaks ties)', () => {
    expect(naturalCompare('KF02', 'KF2')).toBeLessThan(0)
    expect(naturalCompare('KF2', 'KF02')).toBeGreaterThan(0)
    expect(naturalCompare('KF2', 'KF2')).toBe(0)
  })
  it('sorts objects by a key without touching the input', () => {
    const input = [{ name: 'CP10' }, { name: 'CP9' }]
    expect(naturalSortBy(input, (s) => s.name).map((s) => s.name)).toEqual(['CP9', 'CP10'])
    expect(input.map((s) => s.name)).toEqual(['CP10', 'CP9'])
  })
})
