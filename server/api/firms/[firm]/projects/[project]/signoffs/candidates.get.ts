// GET /api/firms/:firm/projects/:project/signoffs/candidates — finished runs that can be signed off
import { STAFF } from '../../../../../../../shared/roles'
import { listSignableRuns } from '../../../../../../services/signoffs'

export default defineFirmRoute({ roles: STAFF, project: true }, ({ ctx, project }) => listSignableRuns(ctx, project))
