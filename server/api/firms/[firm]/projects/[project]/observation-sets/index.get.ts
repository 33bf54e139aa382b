// GET /api/firms/:firm/projects/:project/observation-sets — uploaded files of the project with counts (no bytes)
import { STAFF } from '../../../../../../../shared/roles'
import { listObservationSets } from '../../../../../../services/observations'

export default defineFirmRoute({ roles: STAFF, project: true }, ({ ctx, project }) => listObservationSets(ctx, project))
