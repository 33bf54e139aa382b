// GET /api/firms/:firm/projects/:project/releases — releases with their files and SHA-256 (clients: shared projects only)
import { listReleases } from '../../../../../../../server/services/releases'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event)
  const project = await requireProject(event, ctx)
  return listReleases(ctx, project)
})
