// POST /api/firms/:firm/tolerance-profiles — add an accuracy standard (owner, party chief, licensed surveyor)
import { CHIEFS } from '../../../../../shared/roles'
import { createToleranceProfile, toleranceCreateSchema } from '../../../../../server/services/tolerance'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, CHIEFS)
  const body = await parseBody(event, toleranceCreateSchema)
  const profile = await createToleranceProfile(ctx, body)
  setResponseStatus(event, 201)
  return profile
})
