// POST /api/firms/:firm/projects/:project/access — grant a client user access to the project's releases
import { CHIEFS } from '../../../../../../../shared/roles'
import { accessGrantSchema, grantAccess } from '../../../../../../../server/services/access'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, CHIEFS)
  const project = await requireProject(event, ctx)
  const body = await parseBody(event, accessGrantSchema)
  const out = await grantAccess(ctx, project, body)
  setResponseStatus(event, out.created ? 201 : 200)
  return out
})
