// POST /api/firms/:firm/projects/:project/releases — publish a signed coordinate list as client deliverables
import { CHIEFS } from '../../../../../../../shared/roles'
import { createRelease, releaseCreateSchema } from '../../../../../../../server/services/releases'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, CHIEFS)
  const project = await requireProject(event, ctx)
  const body = await parseBody(event, releaseCreateSchema)
  const release = await createRelease(ctx, project, body)
  setResponseStatus(event, 201)
  return release
})
