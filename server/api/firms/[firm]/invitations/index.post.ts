// POST /api/firms/:firm/invitations — invite an e-mail address with a role; sends a one-time link (owners)
import { OWNERS } from '../../../../../shared/roles'
import { invitationCreateSchema } from '../../../../../shared/schemas/members'
import { createInvitation } from '../../../../services/invitations'

export default defineFirmRoute({ roles: OWNERS, body: invitationCreateSchema, status: 201 }, ({ ctx, body }) => createInvitation(ctx, body))
