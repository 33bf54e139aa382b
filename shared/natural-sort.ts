// Natural order of station names: digit runs compare by their value, so KF2
// comes before KF10 and P9 before P10. The same order as PostgreSQL's
// "tiepoint_natural" collation (migration 0007: ICU root locale with numeric
// ordering), so a list sorted in SQL and one sorted here agree; names that
// collate equal (KF02, KF2) fall back to their code units, as PostgreSQL's
// deterministic collations do.

/** the collation that SQL sorts station names with */
export const NATURAL_COLLATION = 'tiepoint_natural'

const collator = new Intl.Collator('und', { numeric: true })

export function naturalCompare(a: string, b: string): number {
  return collator.compare(a, b) || (a < b ? -1 : a > b ? 1 : 0)
}

/** A copy sorted by `key` in natural order. */
export function naturalSortBy<T>(items: readonly T[], key: (item: T) => string): T[] {
  return [...items].sort((x, y) => naturalCompare(key(x), key(y)))
}
