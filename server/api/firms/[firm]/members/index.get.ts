// GET /api/firms/:firm/members — the firm's members with their roles (any staff member)
import { STAFF } from '../../../../../shared/roles'
import { listMembers } from '../../../../services/members'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, STAFF)
  return listMembers(ctx)
})
