// Query strings of the paged result routes of a finished run: stations,
// observation results, relative precisions, and the comparison of two runs.
// `sort` names one column, `-` in front for descending (e.g. `?sort=-absW`);
// pages are bounded so no request returns a whole 10,000-station run.
import { z } from 'zod'

export const MAX_PAGE_SIZE = 500
export const DEFAULT_PAGE_SIZE = 50

const flag = z.enum(['0', '1']).transform((v) => v === '1')
const page = z.coerce.number().int().min(1, 'must be 1 or more').max(1_000_000).default(1)
const size = z.coerce.number().int().min(1, 'must be 1 or more').max(MAX_PAGE_SIZE, `must be at most ${MAX_PAGE_SIZE}`).default(DEFAULT_PAGE_SIZE)
const search = z.string().trim().max(60, 'is longer than 60 characters').optional()

function sortOf<const K extends readonly [string, ...string[]]>(keys: K, fallback: string) {
  const all = [...keys, ...keys.map((k) => `-${k}`)] as [string, ...string[]]
  return z.enum(all, { error: `must be one of ${keys.join(', ')} (with - in front for descending)` }).default(fallback)
}

export const STATION_SORTS = ['order', 'name', 'east', 'north', 'height', 'sdEast', 'sdNorth', 'sdHeight', 'semiMajor95'] as const
export const stationPageQuery = z.object({
  page, size, q: search,
  /** default: station names in natural order (KF2 before KF10), as surveyors look them up; `order` is as adjusted */
  sort: sortOf(STATION_SORTS, 'name'),
  kind: z.enum(['control', 'new']).optional(),
  fixed: flag.optional(),
}).strict()
export type StationPageQuery = z.output<typeof stationPageQuery>

export const OBSERVATION_SORTS = ['order', 'line', 'absW', 'w', 'tau', 'redundancy', 'absResidual', 'mdb', 'kind', 'at'] as const
export const observationPageQuery = z.object({
  page, size, q: search,
  sort: sortOf(OBSERVATION_SORTS, '-absW'),
  /** flagged by data snooping or the τ test (excluded observations are never flagged) */
  flagged: flag.optional(),
  weak: flag.optional(),
  excluded: flag.optional(),
  /** pass | watch | fail, as the residual table rates them */
  rating: z.enum(['pass', 'watch', 'fail']).optional(),
  kind: z.enum(['direction', 'angle', 'zenith', 'slope_distance', 'horizontal_distance', 'azimuth', 'height_difference', 'gnss_baseline', 'control']).optional(),
  /** one station: rows at, from or to it */
  station: search,
}).strict()
export type ObservationPageQuery = z.output<typeof observationPageQuery>

/** GNSS vectors of a run, one row per vector (its three component rows folded together). */
export const VECTOR_SORTS = ['order', 'line', 'ratio', 'at'] as const
export const vectorPageQuery = z.object({
  page, size, q: search,
  /** ratio: the vector test's statistic over its critical value */
  sort: sortOf(VECTOR_SORTS, '-ratio'),
  flagged: flag.optional(),
}).strict()
export type VectorPageQuery = z.output<typeof vectorPageQuery>

export const RELATIVE_SORTS = ['order', 'from', 'to', 'distance', 'semiMajor95', 'ratio'] as const
export const relativePageQuery = z.object({
  page, size, q: search,
  /** default: by the pair's station names in natural order, from then to (KF2 before KF10); `order` is as adjusted */
  sort: sortOf(RELATIVE_SORTS, 'from'),
  /** 1: pairs that pass, 0: pairs that fail (unrated pairs match neither) */
  passes: flag.optional(),
}).strict()
export type RelativePageQuery = z.output<typeof relativePageQuery>

export const compareQuery = z.object({
  a: z.coerce.number().int().min(1, 'must be a run number'),
  b: z.coerce.number().int().min(1, 'must be a run number'),
  page, size,
  /** page of the GNSS vector rows (same size as the station shifts) */
  vpage: page,
}).strict()
export type CompareQuery = z.output<typeof compareQuery>
