// One page of a run's result list (stations, observation results, relative
// precisions) from its paged route: the server sorts, filters and cuts the
// page, so the table never holds more than one page of rows in the DOM.
export interface ResultPage<T> { page: number; size: number; total: number; sort: string; rows: T[] }

/**
 * `first`: the first page as the run GET already returned it (same default
 * order and size), so the table shows it at once and asks the server only
 * when the reader changes page, order or filter.
 */
export function useResultPage<T>(source: () => string, initial: Record<string, string | number | undefined>, first?: () => ResultPage<T> | null | undefined) {
  const query = reactive<Record<string, string | number | undefined>>({ page: 1, size: 50, ...initial })
  const seeded = first?.() ?? null
  const { data, pending, error } = useFetch<ResultPage<T>>(source, {
    query, lazy: true, server: false, watch: [query], immediate: !seeded,
    key: `${source()}:${JSON.stringify(initial)}`,
    ...(seeded ? { default: () => seeded } : {}),
  })
  const pages = computed(() => Math.max(1, Math.ceil((data.value?.total ?? 0) / Number(query.size))))
  /** Changing a filter or the order starts again at page 1. */
  function set(key: string, value: string | number | undefined) {
    query[key] = value === '' ? undefined : value
    if (key !== 'page') query.page = 1
  }
  return { query, data, pending, error, pages, set }
}
