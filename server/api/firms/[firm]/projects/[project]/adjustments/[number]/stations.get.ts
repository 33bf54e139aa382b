// GET /api/firms/:firm/projects/:project/adjustments/:number/stations — adjusted stations by page (?page, size ≤ 500, sort, q, kind, fixed)
import { STAFF } from '../../../../../../../../shared/roles'
import { stationPageQuery } from '../../../../../../../../shared/schemas/run-results'
import { runStations } from '../../../../../../../services/adjustments'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, STAFF)
  const project = await requireProject(event, ctx)
  const number = idParam(event, 'number')
  const query = parseQuery(event, stationPageQuery)
  return runStations(ctx, project, number, query)
})
