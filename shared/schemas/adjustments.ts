// Adjustment-run settings, shared by the API (validation) and the "New run" form.
// Every field has a default, so `{}` adjusts every observation set with the
// control held as stored on the stations.
import { z } from 'zod'

export const stationHoldSchema = z.object({
  station: z.string().trim().min(1, 'is required').max(60, 'is longer than 60 characters'),
  /** fixed: control values held exactly; weighted: held with σ; free: control values only as approximations */
  hold: z.enum(['fixed', 'weighted', 'free']),
  sdEastMm: z.number().positive().max(10_000).optional(),
  sdNorthMm: z.number().positive().max(10_000).optional(),
  sdHeightMm: z.number().positive().max(10_000).optional(),
}).strict()

export const runSettingsSchema = z.object({
  /** observation sets to adjust; default every set of the project */
  observationSetIds: z.array(z.number().int().positive()).max(1000).optional(),
  /** as-stored: control as on the stations (with `holds` overrides); free: minimally constrained network */
  datum: z.enum(['as-stored', 'free']).default('as-stored'),
  holds: z.array(stationHoldSchema).max(5000).default([]),
  /** scale precisions by the a-posteriori σ̂0² (default) or keep the a-priori σ0 = 1 */
  scaling: z.enum(['a-posteriori', 'a-priori']).default('a-posteriori'),
  /** confidence level of error ellipses */
  confidence: z.number().min(0.5, 'must be at least 0.5').max(0.999, 'must be at most 0.999').default(0.95),
  /** tolerance profile for the accuracy check; default the project's */
  toleranceProfileId: z.number().int().positive().nullable().optional(),
}).strict()

export type RunSettingsInput = z.input<typeof runSettingsSchema>
export type RunSettings = z.output<typeof runSettingsSchema>

export const excludeBodySchema = z.object({
  observationId: z.number().int().positive(),
}).strict()
