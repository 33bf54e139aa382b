// GET /api/firms/:firm/projects/:project — one project
import { projectDto } from '../../../../../services/projects'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event)
  const project = await requireProject(event, ctx)
  return projectDto(project)
})
