// DELETE /api/firms/:firm/instruments/:instrument — remove an instrument profile (owner, party chief)
import { deleteInstrument } from '../../../../services/instruments'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, ['owner', 'party_chief'])
  await deleteInstrument(ctx, idParam(event, 'instrument'))
  setResponseStatus(event, 204)
  return null
})
