// DELETE /api/firms/:firm/crews/:crew — remove a crew (owner, party chief)
import { deleteCrew } from '../../../../services/crews'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, ['owner', 'party_chief'])
  await deleteCrew(ctx, idParam(event, 'crew'))
  setResponseStatus(event, 204)
  return null
})
