// DELETE /api/firms/:firm/instruments/:instrument — remove an instrument profile (owner, party chief, licensed surveyor)
import { CHIEFS } from '../../../../../shared/roles'
import { deleteInstrument } from '../../../../services/instruments'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, CHIEFS)
  await deleteInstrument(ctx, idParam(event, 'instrument'))
  setResponseStatus(event, 204)
  return null
})
