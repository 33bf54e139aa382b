// POST /api/firms/:firm/invitations — invite an e-mail address with a role; sends a one-time link (owners)
import { OWNERS } from '../../../../../shared/roles'
import { invitationCreateSchema } from '../../../../../shared/schemas/members'
import { createInvitation } from '../../../../services/invitations'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, OWNERS)
  const body = await parseBody(event, invitationCreateSchema)
  const invitation = await createInvitation(ctx, body)
  setResponseStatus(event, 201)
  return invitation
})
