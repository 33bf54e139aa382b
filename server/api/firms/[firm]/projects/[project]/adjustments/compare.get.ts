// GET /api/firms/:firm/projects/:project/adjustments/compare?a=1&b=2 — two finished runs compared in SQL: σ̂0, tests, station shifts by page, changed flags and exclusions
import { STAFF } from '../../../../../../../shared/roles'
import { compareQuery } from '../../../../../../../shared/schemas/run-results'
import { compareProjectRuns } from '../../../../../../services/adjustments'

export default defineFirmRoute({ roles: STAFF, project: true, query: compareQuery }, ({ ctx, project, query }) => compareProjectRuns(ctx, project, query))
