// POST /api/invitations/:token/accept — accept an invitation: { name, password } for a new person, { password } to confirm an existing account
import { invitationAcceptSchema } from '../../../../shared/schemas/members'
import { acceptInvitation } from '../../../services/invitations'

export default definePublicRoute({ body: invitationAcceptSchema }, ({ event, body }) =>
  acceptInvitation(getRouterParam(event, 'token') ?? '', body, clientIp(event)))
