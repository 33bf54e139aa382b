// POST /api/firms/:firm/projects/:project/access — grant a client user access to the project's releases
import { CHIEFS, STAFF } from '../../../../../../../shared/roles'
import { accessGrantSchema, grantAccess } from '../../../../../../../server/services/access'

export default defineApiHandler(async (event) => {
  // project first, so another firm's project answers 404 whatever the role
  const ctx = await requireFirmMember(event, STAFF)
  const project = await requireProject(event, ctx)
  if (!CHIEFS.includes(ctx.role)) throw forbidden()
  const body = await parseBody(event, accessGrantSchema)
  const out = await grantAccess(ctx, project, body)
  setResponseStatus(event, out.created ? 201 : 200)
  return out
})
