// DELETE /api/firms/:firm/members/:member — remove someone from the firm (owners; never the last owner)
import { OWNERS } from '../../../../../shared/roles'
import { removeMember } from '../../../../services/members'

export default defineFirmRoute({ roles: OWNERS, status: 204 }, async ({ event, ctx }) => {
  await removeMember(ctx, idParam(event, 'member'))
  return null
})
