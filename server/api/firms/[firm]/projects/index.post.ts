// POST /api/firms/:firm/projects — create a project
import { CHIEFS } from '../../../../../shared/roles'
import { projectCreateSchema } from '../../../../../shared/schemas/projects'
import { createProject } from '../../../../services/projects'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, CHIEFS)
  const body = await parseBody(event, projectCreateSchema)
  const project = await createProject(ctx, body)
  setResponseStatus(event, 201)
  return project
})
