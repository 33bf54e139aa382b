// GET /api/invitations/:token — what an invitation link offers: firm, e-mail, role (no session needed, no secrets)
import { readInvitation } from '../../../services/invitations'

export default definePublicRoute({}, ({ event }) => readInvitation(getRouterParam(event, 'token') ?? ''))
