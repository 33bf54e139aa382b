// Client access to a project's releases, shared by the API (validation) and the app (forms).
import { z } from 'zod'
import { nameText } from './text'

export const accessGrantSchema = z.object({
  email: z.string().trim().toLowerCase().email('is not an e-mail address').max(254),
  name: nameText(120).optional(),
}).strict()
export type AccessGrant = z.infer<typeof accessGrantSchema>
