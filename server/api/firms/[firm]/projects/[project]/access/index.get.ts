// GET /api/firms/:firm/projects/:project/access — client users who may see the project's releases
import { CHIEFS } from '../../../../../../../shared/roles'
import { listAccess } from '../../../../../../services/access'

export default defineFirmRoute({ roles: CHIEFS, project: true }, ({ ctx, project }) => listAccess(ctx, project))
