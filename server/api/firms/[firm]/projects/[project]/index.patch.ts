// PATCH /api/firms/:firm/projects/:project — update name, description, CRS, units, tolerance profile
import { CHIEFS } from '../../../../../../shared/roles'
import { projectUpdateSchema } from '../../../../../../shared/schemas/projects'
import { updateProject } from '../../../../../services/projects'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, CHIEFS)
  const project = await requireProject(event, ctx)
  const body = await parseBody(event, projectUpdateSchema)
  return updateProject(ctx, project, body)
})
