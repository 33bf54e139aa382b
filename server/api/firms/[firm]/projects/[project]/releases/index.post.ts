// POST /api/firms/:firm/projects/:project/releases — publish a signed coordinate list as client deliverables
import { CHIEFS, STAFF } from '../../../../../../../shared/roles'
import { createRelease, releaseCreateSchema } from '../../../../../../../server/services/releases'

export default defineApiHandler(async (event) => {
  // project first, so another firm's project answers 404 whatever the role
  const ctx = await requireFirmMember(event, STAFF)
  const project = await requireProject(event, ctx)
  if (!CHIEFS.includes(ctx.role)) throw forbidden()
  const body = await parseBody(event, releaseCreateSchema)
  const release = await createRelease(ctx, project, body)
  setResponseStatus(event, 201)
  return release
})
