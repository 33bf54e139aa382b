// GET /api/me/tokens — one's own personal API tokens (never the secrets)
import { listTokens } from '../../../services/tokens'

export default defineUserRoute({}, ({ user }) => listTokens(user.id))
