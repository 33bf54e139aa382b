// DELETE /api/firms/:firm/crews/:crew — remove a crew (owner, party chief, licensed surveyor)
import { CHIEFS } from '../../../../../shared/roles'
import { deleteCrew } from '../../../../services/crews'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, CHIEFS)
  await deleteCrew(ctx, idParam(event, 'crew'))
  setResponseStatus(event, 204)
  return null
})
