// GET /api/firms/:firm/invitations — open invitations (owners)
import { OWNERS } from '../../../../../shared/roles'
import { listInvitations } from '../../../../services/invitations'

export default defineFirmRoute({ roles: OWNERS }, ({ ctx }) => listInvitations(ctx))
