// GET /api/firms/:firm/projects/:project/adjustments/:number/status — progress only (polled while queued/running)
import { STAFF } from '../../../../../../../../shared/roles'
import { getRunStatus } from '../../../../../../../services/adjustments'

export default defineFirmRoute({ roles: STAFF, project: true }, ({ event, ctx, project }) => getRunStatus(ctx, project, idParam(event, 'number')))
