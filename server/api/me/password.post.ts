// POST /api/me/password — change one's own password { current, next } (signed-in session only, not an API token);
// every other session of the person ends, this one goes on
import { passwordChangeSchema } from '../../../shared/schemas/profile'
import { changePassword } from '../../services/profile'

export default defineUserRoute({ session: true, body: passwordChangeSchema }, async ({ event, user, body }) => {
  const version = await changePassword(user, body, clientIp(event))
  await reissueSession(event, version)
  return { message: 'Your password has been changed. Your other sessions have ended.' }
})
