// GET /api/firms/:firm/projects/:project/access — client users who may see the project's releases
import { CHIEFS } from '../../../../../../../shared/roles'
import { listAccess } from '../../../../../../../server/services/access'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, CHIEFS)
  const project = await requireProject(event, ctx)
  return listAccess(ctx, project)
})
