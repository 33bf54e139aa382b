// GET /api/firms/:firm/tolerance-profiles — the firm's accuracy standards with their sources
import { STAFF } from '../../../../../shared/roles'
import { listToleranceProfiles } from '../../../../services/tolerance'

export default defineFirmRoute({ roles: STAFF }, ({ ctx }) => listToleranceProfiles(ctx))
