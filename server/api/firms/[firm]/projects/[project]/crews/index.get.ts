// GET /api/firms/:firm/projects/:project/crews — crews assigned to the project
import { STAFF } from '../../../../../../../shared/roles'
import { listCrews } from '../../../../../../services/crews'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, STAFF)
  const project = await requireProject(event, ctx)
  return listCrews(ctx, project.id)
})
