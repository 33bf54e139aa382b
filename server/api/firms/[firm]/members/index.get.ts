// GET /api/firms/:firm/members — the firm's members with their roles (any staff member)
import { STAFF } from '../../../../../shared/roles'
import { listMembers } from '../../../../services/members'

export default defineFirmRoute({ roles: STAFF }, ({ ctx }) => listMembers(ctx))
