// GET /api/firms/:firm/tolerance-profiles — the firm's accuracy standards with their sources
import { STAFF } from '../../../../../shared/roles'
import { listToleranceProfiles } from '../../../../../server/services/tolerance'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, STAFF)
  return listToleranceProfiles(ctx)
})
