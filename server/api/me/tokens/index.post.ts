// POST /api/me/tokens — create a personal API token { name }; 201 with the token, shown this once (signed-in session only:
// a token minting more tokens would outlive its own revocation)
import { tokenCreateSchema } from '../../../../shared/schemas/tokens'
import { createToken } from '../../../services/tokens'

export default defineUserRoute({ session: true, body: tokenCreateSchema, status: 201 }, ({ user, body }) => createToken(user.id, body.name))
