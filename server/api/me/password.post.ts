// POST /api/me/password — change one's own password { current, next } (signed-in session only, not an API token)
import { passwordChangeSchema } from '../../../shared/schemas/profile'
import { changePassword } from '../../services/profile'

export default defineApiHandler(async (event) => {
  const user = await requireUser(event)
  if (user.via !== 'session') throw forbidden('Change your password in the app, not with an API token')
  const body = await parseBody(event, passwordChangeSchema)
  await changePassword(user, body, getRequestIP(event, { xForwardedFor: false }) ?? 'unknown')
  return { message: 'Your password has been changed.' }
})
