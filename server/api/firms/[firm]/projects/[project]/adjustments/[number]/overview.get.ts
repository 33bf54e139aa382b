// GET /api/firms/:firm/projects/:project/adjustments/:number/overview — what the map and histograms draw: stations and connected pairs as compact arrays, w and rᵢ counts
import { STAFF } from '../../../../../../../../shared/roles'
import { runOverview } from '../../../../../../../services/adjustments'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, STAFF)
  const project = await requireProject(event, ctx)
  return runOverview(ctx, project, idParam(event, 'number'))
})
