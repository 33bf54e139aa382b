// GET /api/firms/:firm/projects/:project/signoffs/candidates — finished runs that can be signed off
import { STAFF } from '../../../../../../../shared/roles'
import { listSignableRuns } from '../../../../../../../server/services/signoffs'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, STAFF)
  const project = await requireProject(event, ctx)
  return listSignableRuns(ctx, project)
})
