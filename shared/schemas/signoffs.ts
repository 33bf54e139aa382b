// Sign-off bodies and queries, shared by the API (validation) and the app (forms).
import { z } from 'zod'

export const signoffCreateSchema = z.object({
  statement: z.string().trim().min(10, 'is required: at least 10 characters saying what you certify').max(5000),
  password: z.string().min(1, 'is required: confirm with your password'),
  stations: z.array(z.string().trim().min(1)).min(1, 'must name at least one station').max(5000).optional(),
  /** required when the run failed its global test or still has flagged observations */
  acknowledgeFailedTests: z.boolean().optional(),
}).strict()
export type SignoffCreate = z.infer<typeof signoffCreateSchema>

export const signoffRequestSchema = z.object({ note: z.string().trim().max(2000).optional() }).strict()
export type SignoffRequest = z.infer<typeof signoffRequestSchema>

/** `page`, `size`: the page of signable stations listed (a 10,000-station run is never listed whole). */
export const signoffPreviewQuerySchema = z.object({
  run: z.coerce.number().int().positive(),
  page: z.coerce.number().int().min(1, 'must be 1 or more').max(1_000_000).default(1),
  size: z.coerce.number().int().min(1, 'must be 1 or more').max(500, 'must be at most 500').default(100),
})
export type SignoffPreviewQuery = z.output<typeof signoffPreviewQuerySchema>
