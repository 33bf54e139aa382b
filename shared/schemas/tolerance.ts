// Tolerance profiles (accuracy standards as data), shared by the API and the app.
import { z } from 'zod'
import { nameText } from './text'

export const toleranceCreateSchema = z.discriminatedUnion('kind', [
  z.object({
    kind: z.enum(['relative_ppm', 'custom']),
    name: nameText(120),
    mm: z.number().min(0, 'must be 0 or more').max(10_000),
    ppm: z.number().min(0, 'must be 0 or more').max(100_000),
    source: z.string().trim().min(1, 'is required: say where the rule comes from').max(500),
  }).strict(),
  z.object({
    kind: z.literal('fgdc_95'),
    name: nameText(120),
    thresholdMm: z.number().positive('must be more than 0').max(100_000),
    source: z.string().trim().min(1, 'is required: say where the threshold comes from').max(500),
  }).strict(),
])
export type ToleranceCreate = z.infer<typeof toleranceCreateSchema>

/**
 * Editing a profile: its kind stays (the kind decides which numbers it has);
 * `retired` true takes it out of the choices for new runs and projects, false
 * brings it back. Runs and sign-offs keep the rule they were checked against.
 */
export const toleranceUpdateSchema = z.object({
  name: nameText(120).optional(),
  mm: z.number().min(0, 'must be 0 or more').max(10_000).optional(),
  ppm: z.number().min(0, 'must be 0 or more').max(100_000).optional(),
  thresholdMm: z.number().positive('must be more than 0').max(100_000).optional(),
  source: z.string().trim().min(1, 'is required: say where the rule comes from').max(500).optional(),
  retired: z.boolean().optional(),
}).strict()
export type ToleranceUpdate = z.infer<typeof toleranceUpdateSchema>
