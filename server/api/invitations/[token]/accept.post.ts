// POST /api/invitations/:token/accept — accept an invitation: { name, password } for a new person, { password } to confirm an existing account
import { invitationAcceptSchema } from '../../../../shared/schemas/members'
import { acceptInvitation } from '../../../services/invitations'

export default defineApiHandler(async (event) => {
  const token = getRouterParam(event, 'token') ?? ''
  const body = await parseBody(event, invitationAcceptSchema)
  const ip = getRequestIP(event, { xForwardedFor: false }) ?? 'unknown'
  return acceptInvitation(token, body, ip)
})
