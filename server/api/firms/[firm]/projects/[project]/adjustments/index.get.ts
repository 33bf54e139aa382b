// GET /api/firms/:firm/projects/:project/adjustments — the project's runs, newest first
import { STAFF } from '../../../../../../../shared/roles'
import { listRuns } from '../../../../../../services/adjustments'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, STAFF)
  const project = await requireProject(event, ctx)
  return listRuns(ctx, project)
})
