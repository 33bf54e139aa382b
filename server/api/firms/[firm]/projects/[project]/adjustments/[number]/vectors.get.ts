// GET /api/firms/:firm/projects/:project/adjustments/:number/vectors — the run's GNSS vectors by page, one row per vector with its whole-vector test (?page, size ≤ 500, sort=-ratio, flagged, q)
import { STAFF } from '../../../../../../../../shared/roles'
import { vectorPageQuery } from '../../../../../../../../shared/schemas/run-results'
import { runVectors } from '../../../../../../../services/adjustments'

export default defineFirmRoute({ roles: STAFF, project: true, query: vectorPageQuery }, ({ event, ctx, project, query }) =>
  runVectors(ctx, project, idParam(event, 'number'), query))
