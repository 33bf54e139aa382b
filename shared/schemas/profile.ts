// Profile bodies: name and licence details, password change.
import { z } from 'zod'
import { passwordSchema, personNameSchema } from './members'

// An empty licence field means "none": stored as null so sign-off can tell it is missing.
const optionalText = (max: number) => z.string().trim().max(max, `is longer than ${max} characters`)
  .transform((v) => (v === '' ? null : v)).nullable().optional()

export const profileUpdateSchema = z.object({
  name: personNameSchema.optional(),
  licenceNumber: optionalText(60),
  licenceJurisdiction: optionalText(120),
}).strict()

export const passwordChangeSchema = z.object({
  current: z.string().min(1, 'is required').max(200, 'is longer than 200 characters'),
  next: passwordSchema,
}).strict()

export type ProfileUpdate = z.infer<typeof profileUpdateSchema>
export type PasswordChange = z.infer<typeof passwordChangeSchema>
