// GET /api/firms/:firm/projects — the firm's projects with status and counts (clients: only shared ones)
import { listProjects } from '../../../../services/projects'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event)
  return listProjects(ctx)
})
