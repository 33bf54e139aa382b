// GET /api/me/tokens — one's own personal API tokens (never the secrets)
import { listTokens } from '../../../services/tokens'

export default defineApiHandler(async (event) => {
  const user = await requireUser(event)
  return listTokens(user.id)
})
