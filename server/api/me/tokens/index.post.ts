// POST /api/me/tokens — create a personal API token { name }; 201 with the token, shown this once (signed-in session only)
import { tokenCreateSchema } from '../../../../shared/schemas/tokens'
import { createToken } from '../../../services/tokens'

export default defineApiHandler(async (event) => {
  const user = await requireUser(event)
  // A token minting more tokens would outlive its own revocation.
  if (user.via !== 'session') throw forbidden('Create API tokens in the app, not with another API token')
  const body = await parseBody(event, tokenCreateSchema)
  const token = await createToken(user.id, body.name)
  setResponseStatus(event, 201)
  return token
})
