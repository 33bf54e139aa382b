// GET /api/me — the user, the firms and the role in each
import { getMe } from '../services/profile'

export default defineUserRoute({}, ({ user }) => getMe(user))
