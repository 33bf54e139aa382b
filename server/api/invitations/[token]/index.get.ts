// GET /api/invitations/:token — what an invitation link offers: firm, e-mail, role (no session needed, no secrets)
import { readInvitation } from '../../../services/invitations'

export default defineApiHandler(async (event) => {
  const token = getRouterParam(event, 'token') ?? ''
  return readInvitation(token)
})
