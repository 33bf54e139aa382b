// PATCH /api/me — update one's own name, licence number and licence jurisdiction
import { profileUpdateSchema } from '../../shared/schemas/profile'
import { updateProfile } from '../services/profile'

export default defineApiHandler(async (event) => {
  const user = await requireUser(event)
  const body = await parseBody(event, profileUpdateSchema)
  return updateProfile(user, body)
})
