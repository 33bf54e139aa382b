// GET /api/firms/:firm/projects/:project/adjustments/:number/overview — what the map and histograms draw: stations and connected pairs as compact arrays, w and rᵢ counts
import { STAFF } from '../../../../../../../../shared/roles'
import { runOverview } from '../../../../../../../services/adjustments'

export default defineFirmRoute({ roles: STAFF, project: true }, async ({ event, ctx, project }) => {
  // JSON text kept with the run: sent as it is, not parsed and serialized again
  const body = await runOverview(ctx, project, idParam(event, 'number'))
  setResponseHeader(event, 'content-type', 'application/json; charset=utf-8')
  return body
})
