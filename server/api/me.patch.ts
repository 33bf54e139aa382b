// PATCH /api/me — update one's own name, licence number and licence jurisdiction
import { profileUpdateSchema } from '../../shared/schemas/profile'
import { updateProfile } from '../services/profile'

export default defineUserRoute({ body: profileUpdateSchema }, ({ user, body }) => updateProfile(user, body))
