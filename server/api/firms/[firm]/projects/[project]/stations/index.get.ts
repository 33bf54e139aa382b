// GET /api/firms/:firm/projects/:project/stations — stations with control values (metres) and observation counts
import { STAFF } from '../../../../../../../shared/roles'
import { listStations } from '../../../../../../services/stations'

export default defineFirmRoute({ roles: STAFF, project: true }, ({ ctx, project }) => listStations(ctx, project))
