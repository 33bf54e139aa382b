// Release bodies, shared by the API (validation) and the app (forms).
import { z } from 'zod'

export const releaseCreateSchema = z.object({
  signoffId: z.number().int().positive(),
  note: z.string().max(2000).optional(),
}).strict()
export type ReleaseCreate = z.infer<typeof releaseCreateSchema>
