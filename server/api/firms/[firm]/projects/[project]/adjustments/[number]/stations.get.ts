// GET /api/firms/:firm/projects/:project/adjustments/:number/stations — adjusted stations by page (?page, size ≤ 500, sort, q, kind, fixed)
import { STAFF } from '../../../../../../../../shared/roles'
import { stationPageQuery } from '../../../../../../../../shared/schemas/run-results'
import { runStations } from '../../../../../../../services/adjustments'

export default defineFirmRoute({ roles: STAFF, project: true, query: stationPageQuery }, ({ event, ctx, project, query }) =>
  runStations(ctx, project, idParam(event, 'number'), query))
