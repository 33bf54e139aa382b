// Member, invitation and password-reset bodies, shared by the API (validation)
// and the app (forms). Messages follow the field name ("email: is not ...").
import { z } from 'zod'
import { ROLES } from '../roles'
import { hasNoControlChars } from './text'

// Missing fields say "is required" rather than zod's type wording.
const required = (otherwise: string) => ({
  error: (issue: { input?: unknown }) => (issue.input === undefined ? 'is required' : otherwise),
})

/** bcrypt reads only the first 72 bytes, so a longer password would silently be cut. */
export const PASSWORD_MIN = 10
export const PASSWORD_MAX_BYTES = 72

export const passwordSchema = z.string(required('must be text'))
  .min(PASSWORD_MIN, `must be at least ${PASSWORD_MIN} characters`)
  .refine((v) => new TextEncoder().encode(v).length <= PASSWORD_MAX_BYTES, {
    message: `is longer than ${PASSWORD_MAX_BYTES} bytes`,
  })

export const emailSchema = z.string(required('must be text')).trim().toLowerCase()
  .max(254, 'is longer than 254 characters')
  .pipe(z.email('is not an e-mail address'))

export const roleSchema = z.enum(ROLES, required(`must be one of ${ROLES.join(', ')}`))

export const personNameSchema = z.string(required('must be text')).trim().min(1, 'is required').max(120, 'is longer than 120 characters')
  .refine(hasNoControlChars, { message: 'must not contain control characters (tabs, line breaks …)' })

export const memberUpdateSchema = z.object({ role: roleSchema }).strict()

export const invitationCreateSchema = z.object({ email: emailSchema, role: roleSchema }).strict()

/** New people give a name; people who already have an account confirm their password. */
export const invitationAcceptSchema = z.object({
  name: personNameSchema.optional(),
  password: passwordSchema,
}).strict()

export const passwordResetRequestSchema = z.object({ email: emailSchema }).strict()

export const passwordResetConfirmSchema = z.object({
  token: z.string().min(1, 'is required').max(200, 'is longer than 200 characters'),
  password: passwordSchema,
}).strict()

export type MemberUpdate = z.infer<typeof memberUpdateSchema>
export type InvitationCreate = z.infer<typeof invitationCreateSchema>
export type InvitationAccept = z.infer<typeof invitationAcceptSchema>
export type PasswordResetConfirm = z.infer<typeof passwordResetConfirmSchema>
