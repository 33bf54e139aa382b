// GET /api/firms/:firm/projects/:project/adjustments/:number/observations — observation results by page (?page, size ≤ 500, sort=-absW, flagged, weak, excluded, rating, kind, station, q)
import { STAFF } from '../../../../../../../../shared/roles'
import { observationPageQuery } from '../../../../../../../../shared/schemas/run-results'
import { runObservations } from '../../../../../../../services/adjustments'

export default defineFirmRoute({ roles: STAFF, project: true, query: observationPageQuery }, ({ event, ctx, project, query }) =>
  runObservations(ctx, project, idParam(event, 'number'), query))
