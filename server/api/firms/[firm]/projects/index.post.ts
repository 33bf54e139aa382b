// POST /api/firms/:firm/projects — create a project
import { CHIEFS } from '../../../../../shared/roles'
import { projectCreateSchema } from '../../../../../shared/schemas/projects'
import { createProject } from '../../../../services/projects'

export default defineFirmRoute({ roles: CHIEFS, body: projectCreateSchema, status: 201 }, ({ ctx, body }) => createProject(ctx, body))
