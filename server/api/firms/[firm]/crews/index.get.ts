// GET /api/firms/:firm/crews — the firm's crews with members and assigned projects
import { STAFF } from '../../../../../shared/roles'
import { listCrews } from '../../../../services/crews'

export default defineFirmRoute({ roles: STAFF }, ({ ctx }) => listCrews(ctx))
