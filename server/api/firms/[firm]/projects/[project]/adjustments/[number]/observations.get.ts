// GET /api/firms/:firm/projects/:project/adjustments/:number/observations — observation results by page (?page, size ≤ 500, sort=-absW, flagged, weak, excluded, rating, kind, station, q)
import { STAFF } from '../../../../../../../../shared/roles'
import { observationPageQuery } from '../../../../../../../../shared/schemas/run-results'
import { runObservations } from '../../../../../../../services/adjustments'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, STAFF)
  const project = await requireProject(event, ctx)
  const number = idParam(event, 'number')
  const query = parseQuery(event, observationPageQuery)
  return runObservations(ctx, project, number, query)
})
