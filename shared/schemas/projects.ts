// Project bodies, shared by the API (validation) and the app (forms).
import { z } from 'zod'
import { nameText } from './text'
import { findCrs } from '../crs'

export const crsSchema = z.string().trim().refine((v) => v === 'local' || !!findCrs(v), {
  message: "must be 'local' or a supported 'EPSG:<code>'",
})

export const projectCreateSchema = z.object({
  name: nameText(120),
  crs: crsSchema,
  units: z.enum(['m', 'ft', 'usft']),
  description: z.string().max(2000, 'is longer than 2000 characters').optional(),
  angleFormat: z.enum(['dms', 'gon']).optional(),
  /** feet projects: precisions in mm or hundredths of a foot (metre projects always show mm) */
  precisionUnit: z.enum(['mm', 'hundredth_ft']).optional(),
}).strict()

/** Geodetic settings of a project, passed to every run and recorded with it. */
export const projectGeodesySchema = z.object({
  /** geoid separation N in metres (ellipsoidal height = height + N), one value for the network */
  geoidSeparationM: z.number().finite().min(-200, 'must be at least −200 m').max(200, 'must be at most 200 m'),
  /** coefficient of refraction k (common practice 0.13) */
  refractionK: z.number().finite().min(-1, 'must be at least −1').max(1, 'must be at most 1'),
  /** its standard deviation (common practice 0.05) */
  refractionSigmaK: z.number().finite().min(0, 'must not be negative').max(1, 'must be at most 1'),
  /** local plane only: the height ground distances are reduced to; null = as measured */
  projectHeightM: z.number().finite().min(-1000, 'must be at least −1000 m').max(9000, 'must be at most 9000 m').nullable(),
})

export const projectUpdateSchema = projectCreateSchema.partial().extend({
  toleranceProfileId: z.number().int().positive().nullable().optional(),
}).merge(projectGeodesySchema.partial()).strict()

export type ProjectCreate = z.infer<typeof projectCreateSchema>
export type ProjectUpdate = z.infer<typeof projectUpdateSchema>
