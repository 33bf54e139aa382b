// DELETE /api/firms/:firm/invitations/:invitation — withdraw an open invitation (owners)
import { OWNERS } from '../../../../../shared/roles'
import { revokeInvitation } from '../../../../services/invitations'

export default defineFirmRoute({ roles: OWNERS, status: 204 }, async ({ event, ctx }) => {
  await revokeInvitation(ctx, idParam(event, 'invitation'))
  return null
})
