// GET /api/firms/:firm/projects/:project/crews — crews assigned to the project
import { STAFF } from '../../../../../../../shared/roles'
import { listCrews } from '../../../../../../services/crews'

export default defineFirmRoute({ roles: STAFF, project: true }, ({ ctx, project }) => listCrews(ctx, project.id))
