// GET /api/firms/:firm/projects/:project/adjustments/:number/status — progress only (polled while queued/running)
import { STAFF } from '../../../../../../../../shared/roles'
import { getRunStatus } from '../../../../../../../services/adjustments'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, STAFF)
  const project = await requireProject(event, ctx)
  return getRunStatus(ctx, project, idParam(event, 'number'))
})
