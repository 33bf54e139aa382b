// DELETE /api/firms/:firm/instruments/:instrument — remove an instrument profile (owner, party chief, licensed surveyor)
import { CHIEFS } from '../../../../../shared/roles'
import { deleteInstrument } from '../../../../services/instruments'

export default defineFirmRoute({ roles: CHIEFS, status: 204 }, async ({ event, ctx }) => {
  await deleteInstrument(ctx, idParam(event, 'instrument'))
  return null
})
