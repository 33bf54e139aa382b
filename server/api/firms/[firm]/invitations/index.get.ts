// GET /api/firms/:firm/invitations — open invitations (owners)
import { OWNERS } from '../../../../../shared/roles'
import { listInvitations } from '../../../../services/invitations'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, OWNERS)
  return listInvitations(ctx)
})
