// DELETE /api/firms/:firm/members/:member — remove someone from the firm (owners; never the last owner)
import { OWNERS } from '../../../../../shared/roles'
import { removeMember } from '../../../../services/members'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, OWNERS)
  const memberId = idParam(event, 'member')
  await removeMember(ctx, memberId)
  setResponseStatus(event, 204)
  return null
})
