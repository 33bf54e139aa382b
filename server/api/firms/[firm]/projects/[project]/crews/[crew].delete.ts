// DELETE /api/firms/:firm/projects/:project/crews/:crew — take a crew off the project
import { CHIEFS } from '../../../../../../../shared/roles'
import { unassignCrew } from '../../../../../../services/crews'

export default defineFirmRoute({ roles: CHIEFS, project: true, status: 204 }, async ({ event, ctx, project }) => {
  await unassignCrew(ctx, project, idParam(event, 'crew'))
  return null
})
