// DELETE /api/firms/:firm/projects/:project/crews/:crew — take a crew off the project
import { CHIEFS } from '../../../../../../../shared/roles'
import { unassignCrew } from '../../../../../../services/crews'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, CHIEFS)
  const project = await requireProject(event, ctx)
  await unassignCrew(ctx, project, idParam(event, 'crew'))
  setResponseStatus(event, 204)
  return null
})
