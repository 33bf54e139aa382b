// DELETE /api/me/tokens/:id — revoke one of one's own API tokens (it stops working at once)
import { revokeToken } from '../../../services/tokens'

export default defineUserRoute({}, ({ event, user }) => revokeToken(user.id, idParam(event, 'id')))
