// GET /api/firms/:firm/projects/:project/adjustments/:number/relative — relative precisions of connected pairs by page (?page, size ≤ 500, sort, q, passes)
import { STAFF } from '../../../../../../../../shared/roles'
import { relativePageQuery } from '../../../../../../../../shared/schemas/run-results'
import { runRelative } from '../../../../../../../services/adjustments'

export default defineFirmRoute({ roles: STAFF, project: true, query: relativePageQuery }, ({ event, ctx, project, query }) =>
  runRelative(ctx, project, idParam(event, 'number'), query))
