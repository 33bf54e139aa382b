// DELETE /api/firms/:firm/projects/:project/stations/:station — remove a station no observation uses
import { CHIEFS } from '../../../../../../../shared/roles'
import { deleteStation } from '../../../../../../services/stations'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, CHIEFS)
  const project = await requireProject(event, ctx)
  await deleteStation(ctx, project, idParam(event, 'station'))
  setResponseStatus(event, 204)
  return null
})
