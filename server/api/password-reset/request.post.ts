// POST /api/password-reset/request — e-mail a one-time reset link; always 202 with the same message
import { passwordResetRequestSchema } from '../../../shared/schemas/members'
import { RESET_REQUESTED_MESSAGE, requestPasswordReset } from '../../services/password-reset'

export default definePublicRoute({ body: passwordResetRequestSchema, status: 202 }, ({ body }) => {
  requestPasswordReset(body.email)
  return { message: RESET_REQUESTED_MESSAGE }
})
