// Bodies and queries of the field-data routes (observations, stations,
// instrument profiles, crews), shared by the API (validation) and the app (forms).
// Station coordinates travel in metres; the app converts to and from the
// project's display units at its edge.
import { z } from 'zod'
import { OBSERVATION_KINDS } from '../observation-kinds'
import { nameText } from './text'

const name = nameText(100)
const metres = z.number().finite().gt(-1e8, 'is too large for a coordinate').lt(1e8, 'is too large for a coordinate')
const sd = z.number().finite().positive('must be positive (leave it empty to hold the value fixed)').max(1000, 'is implausibly large (metres)')

export { OBSERVATION_KINDS }

export const observationQuerySchema = z.object({
  setId: z.coerce.number().int().positive().optional(),
  kind: z.enum(OBSERVATION_KINDS).optional(),
  station: z.string().trim().max(100).optional(),
  excluded: z.enum(['true', 'false']).optional(),
  sort: z.enum(['line', 'kind', 'at', 'from', 'to', 'value', 'excluded', 'set']).default('line'),
  dir: z.enum(['asc', 'desc']).default('asc'),
  page: z.coerce.number().int().min(1).max(100_000, 'is beyond the last page').default(1),
  pageSize: z.coerce.number().int().min(1).max(500).default(50),
})
export type ObservationQuery = z.infer<typeof observationQuerySchema>

/** An edit: `value` in metres / radians, or `valueText` as typed in the project's units and angle format. */
export const observationPatchSchema = z.object({
  value: z.number().finite().optional(),
  valueText: z.string().trim().min(1, 'is blank').max(60).optional(),
  excluded: z.boolean().optional(),
  reason: z.string().trim().max(500).optional(),
}).strict().refine((b) => b.value !== undefined || b.valueText !== undefined || b.excluded !== undefined, {
  message: 'send value, valueText or excluded',
})
export type ObservationPatch = z.infer<typeof observationPatchSchema>

/** One typed-in row: the same columns as the observation CSV, as text. */
export const manualRowSchema = z.object({
  kind: z.string().max(40).default(''),
  at: z.string().max(200).default(''),
  from: z.string().max(200).default(''),
  to: z.string().max(200).default(''),
  value: z.string().max(100).default(''),
  unit: z.string().max(20).default(''),
  sigma: z.string().max(60).default(''),
  hi: z.string().max(30).default(''),
  ht: z.string().max(30).default(''),
  set: z.string().max(100).default(''),
  length: z.string().max(30).default(''),
  note: z.string().max(500).default(''),
  /** gnss_baseline only: ρXY ρXZ ρYZ */
  correlation: z.string().max(60).default(''),
}).strict()
export const manualObservationsSchema = z.object({
  rows: z.array(manualRowSchema).min(1, 'add at least one row').max(2000, 'at most 2000 rows at a time'),
  crewId: z.number().int().positive().nullable().optional(),
  instrumentProfileId: z.number().int().positive().nullable().optional(),
}).strict()
export type ManualRow = z.infer<typeof manualRowSchema>
export type ManualObservations = z.infer<typeof manualObservationsSchema>

const stationFields = {
  name,
  description: z.string().max(2000, 'is longer than 2000 characters').optional(),
  kind: z.enum(['control', 'new']).optional(),
  approxEast: metres.nullable().optional(),
  approxNorth: metres.nullable().optional(),
  approxHeight: metres.nullable().optional(),
  controlEast: metres.nullable().optional(),
  controlNorth: metres.nullable().optional(),
  controlHeight: metres.nullable().optional(),
  sdEast: sd.nullable().optional(),
  sdNorth: sd.nullable().optional(),
  sdHeight: sd.nullable().optional(),
}
const pairs = (b: Record<string, unknown>) => (b.controlEast == null) === (b.controlNorth == null)
export const stationCreateSchema = z.object(stationFields).strict()
  .refine(pairs, { message: 'give control east and north together', path: ['controlNorth'] })
export const stationUpdateSchema = z.object(stationFields).partial().strict()
export type StationCreate = z.infer<typeof stationCreateSchema>
export type StationUpdate = z.infer<typeof stationUpdateSchema>

export const instrumentSchema = z.object({
  name: nameText(120),
  distanceMm: z.number().finite().min(0).max(1000),
  distancePpm: z.number().finite().min(0).max(1000),
  directionArcsec: z.number().finite().min(0).max(3600),
  zenithArcsec: z.number().finite().min(0).max(3600),
  centeringInstrumentMm: z.number().finite().min(0).max(1000),
  centeringTargetMm: z.number().finite().min(0).max(1000),
  levellingMmPerSqrtKm: z.number().finite().min(0).max(1000),
}).strict()
export const instrumentUpdateSchema = instrumentSchema.partial().strict()
export type InstrumentBody = z.infer<typeof instrumentSchema>
export type InstrumentUpdate = z.infer<typeof instrumentUpdateSchema>

export const crewSchema = z.object({
  name: nameText(120),
  memberIds: z.array(z.number().int().positive()).max(200).optional(),
}).strict()
export const crewUpdateSchema = crewSchema.partial().strict()
export type CrewBody = z.infer<typeof crewSchema>
export type CrewUpdate = z.infer<typeof crewUpdateSchema>

export const projectCrewSchema = z.object({ crewId: z.number().int().positive() }).strict()

/** A control-coordinate CSV uploaded as a file (multipart) may be this large. */
export const MAX_CONTROL_BYTES = 5 * 1024 * 1024
/** The same CSV pasted as text in a JSON body, which is capped at 1 MB like every JSON body. */
export const controlImportTextSchema = z.object({ text: z.string().min(1, 'is blank').max(1024 * 1024) }).strict()
