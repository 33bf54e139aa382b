// DELETE /api/firms/:firm/crews/:crew — remove a crew (owner, party chief, licensed surveyor)
import { CHIEFS } from '../../../../../shared/roles'
import { deleteCrew } from '../../../../services/crews'

export default defineFirmRoute({ roles: CHIEFS, status: 204 }, async ({ event, ctx }) => {
  await deleteCrew(ctx, idParam(event, 'crew'))
  return null
})
