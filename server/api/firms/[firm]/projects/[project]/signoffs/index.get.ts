// GET /api/firms/:firm/projects/:project/signoffs — sign-offs of the project, newest first, with SHA-256 and superseded state
import { STAFF } from '../../../../../../../shared/roles'
import { listSignoffs } from '../../../../../../services/signoffs'

export default defineFirmRoute({ roles: STAFF, project: true }, ({ ctx, project }) => listSignoffs(ctx, project))
