// GET /api/firms/:firm/projects/:project/adjustments/:number — status, summary, stations, observations, `result` in the CLI JSON shape
import { STAFF } from '../../../../../../../../shared/roles'
import { getRun } from '../../../../../../../services/adjustments'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, STAFF)
  const project = await requireProject(event, ctx)
  return getRun(ctx, project, idParam(event, 'number'))
})
