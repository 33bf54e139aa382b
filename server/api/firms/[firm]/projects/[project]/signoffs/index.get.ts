// GET /api/firms/:firm/projects/:project/signoffs — sign-offs of the project, newest first, with SHA-256 and superseded state
import { STAFF } from '../../../../../../../shared/roles'
import { listSignoffs } from '../../../../../../../server/services/signoffs'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, STAFF)
  const project = await requireProject(event, ctx)
  return listSignoffs(ctx, project)
})
