// GET /api/firms/:firm/projects/:project/access — client users who may see the project's releases
import { CHIEFS, STAFF } from '../../../../../../../shared/roles'
import { listAccess } from '../../../../../../../server/services/access'

export default defineApiHandler(async (event) => {
  // project first, so another firm's project answers 404 whatever the role
  const ctx = await requireFirmMember(event, STAFF)
  const project = await requireProject(event, ctx)
  if (!CHIEFS.includes(ctx.role)) throw forbidden()
  return listAccess(ctx, project)
})
