// Personal API token bodies.
import { z } from 'zod'
import { nameText } from './text'

export const tokenCreateSchema = z.object({
  name: nameText(80),
}).strict()

export type TokenCreate = z.infer<typeof tokenCreateSchema>
