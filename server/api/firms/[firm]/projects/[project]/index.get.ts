// GET /api/firms/:firm/projects/:project — one project with its counts of stations, observations and runs
import { getProjectWithCounts } from '../../../../../services/projects'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event)
  const project = await requireProject(event, ctx)
  return getProjectWithCounts(ctx, project)
})
