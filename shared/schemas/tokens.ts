// Personal API token bodies.
import { z } from 'zod'

export const tokenCreateSchema = z.object({
  name: z.string().trim().min(1, 'is required').max(80, 'is longer than 80 characters'),
}).strict()

export type TokenCreate = z.infer<typeof tokenCreateSchema>
