// GET /api/firms/:firm/projects/:project/adjustments/:number/overview — what the map and histograms draw: stations and connected pairs as compact arrays, w and rᵢ counts
import { STAFF } from '../../../../../../../../shared/roles'
import { runOverview } from '../../../../../../../services/adjustments'

export default defineFirmRoute({ roles: STAFF, project: true }, ({ event, ctx, project }) => runOverview(ctx, project, idParam(event, 'number')))
