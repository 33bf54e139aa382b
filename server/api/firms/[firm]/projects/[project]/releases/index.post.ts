// POST /api/firms/:firm/projects/:project/releases — publish a signed coordinate list as client deliverables
import { CHIEFS } from '../../../../../../../shared/roles'
import { releaseCreateSchema } from '../../../../../../../shared/schemas/releases'
import { createRelease } from '../../../../../../services/releases'

export default defineFirmRoute({ roles: CHIEFS, project: true, body: releaseCreateSchema, status: 201 }, ({ ctx, project, body }) =>
  createRelease(ctx, project, body))
