// DELETE /api/firms/:firm/invitations/:invitation — withdraw an open invitation (owners)
import { OWNERS } from '../../../../../shared/roles'
import { revokeInvitation } from '../../../../services/invitations'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, OWNERS)
  const invitationId = idParam(event, 'invitation')
  await revokeInvitation(ctx, invitationId)
  setResponseStatus(event, 204)
  return null
})
