// POST /api/me/password — change one's own password { current, next } (signed-in session only, not an API token)
import { passwordChangeSchema } from '../../../shared/schemas/profile'
import { changePassword } from '../../services/profile'

export default defineUserRoute({ session: true, body: passwordChangeSchema }, async ({ event, user, body }) => {
  await changePassword(user, body, clientIp(event))
  return { message: 'Your password has been changed.' }
})
