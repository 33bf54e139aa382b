// PATCH /api/firms/:firm/projects/:project — update name, description, CRS, units, tolerance profile
import { CHIEFS } from '../../../../../../shared/roles'
import { projectUpdateSchema } from '../../../../../../shared/schemas/projects'
import { updateProject } from '../../../../../services/projects'

export default defineFirmRoute({ roles: CHIEFS, project: true, body: projectUpdateSchema }, ({ ctx, project, body }) =>
  updateProject(ctx, project, body))
