// POST /api/password-reset/confirm — set a new password with a reset link's token (one-time)
import { passwordResetConfirmSchema } from '../../../shared/schemas/members'
import { confirmPasswordReset } from '../../services/password-reset'

export default definePublicRoute({ body: passwordResetConfirmSchema }, async ({ body }) => {
  await confirmPasswordReset(body.token, body.password)
  return { message: 'Your password has been changed. Sign in with the new one.' }
})
