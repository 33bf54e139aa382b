// PATCH /api/firms/:firm/members/:member — change a member's role (owners; the last owner stays an owner)
import { OWNERS } from '../../../../../shared/roles'
import { memberUpdateSchema } from '../../../../../shared/schemas/members'
import { updateMemberRole } from '../../../../services/members'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, OWNERS)
  const memberId = idParam(event, 'member')
  const body = await parseBody(event, memberUpdateSchema)
  return updateMemberRole(ctx, memberId, body.role)
})
