// GET /api/firms/:firm/projects/:project/adjustments/:number — status, summary, weighting, the first page of stations, observations and relative precisions with totals, `result` in the CLI JSON shape over that page
import { STAFF } from '../../../../../../../../shared/roles'
import { getRun } from '../../../../../../../services/adjustments'

export default defineFirmRoute({ roles: STAFF, project: true }, ({ event, ctx, project }) => getRun(ctx, project, idParam(event, 'number')))
