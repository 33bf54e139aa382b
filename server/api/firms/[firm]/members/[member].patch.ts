// PATCH /api/firms/:firm/members/:member — change a member's role (owners; the last owner stays an owner)
import { OWNERS } from '../../../../../shared/roles'
import { memberUpdateSchema } from '../../../../../shared/schemas/members'
import { updateMemberRole } from '../../../../services/members'

export default defineFirmRoute({ roles: OWNERS, body: memberUpdateSchema }, ({ event, ctx, body }) =>
  updateMemberRole(ctx, idParam(event, 'member'), body.role))
