// GET /api/firms/:firm/projects/:project/adjustments — the project's runs, newest first
import { STAFF } from '../../../../../../../shared/roles'
import { listRuns } from '../../../../../../services/adjustments'

export default defineFirmRoute({ roles: STAFF, project: true }, ({ ctx, project }) => listRuns(ctx, project))
