// GET /api/firms/:firm/crews — the firm's crews with members and assigned projects
import { STAFF } from '../../../../../shared/roles'
import { listCrews } from '../../../../services/crews'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, STAFF)
  return listCrews(ctx)
})
