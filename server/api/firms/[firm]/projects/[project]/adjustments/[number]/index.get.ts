// GET /api/firms/:firm/projects/:project/adjustments/:number — status, summary, stations, observations, `result` in the CLI JSON shape
import { STAFF } from '../../../../../../../../shared/roles'
import { getRun } from '../../../../../../../services/adjustments'

export default defineFirmRoute({ roles: STAFF, project: true }, ({ event, ctx, project }) => getRun(ctx, project, idParam(event, 'number')))
