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
}).strict()

export const projectUpdateSchema = projectCreateSchema.partial().extend({
  toleranceProfileId: z.number().int().positive().nullable().optional(),
}).strict()

export type ProjectCreate = z.infer<typeof projectCreateSchema>
export type ProjectUpdate = z.infer<typeof projectUpdateSchema>
