// DELETE /api/firms/:firm/projects/:project/stations/:station — remove a station no observation uses
import { CHIEFS } from '../../../../../../../shared/roles'
import { deleteStation } from '../../../../../../services/stations'

export default defineFirmRoute({ roles: CHIEFS, project: true, status: 204 }, async ({ event, ctx, project }) => {
  await deleteStation(ctx, project, idParam(event, 'station'))
  return null
})
