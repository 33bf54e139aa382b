// POST /api/firms/:firm/projects/:project/adjustments/:number/signoffs — licensed sign-off of a finished run
import { SIGNERS } from '../../../../../../../../shared/roles'
import { signoffCreateSchema } from '../../../../../../../../shared/schemas/signoffs'
import { createSignoff } from '../../../../../../../services/signoffs'

export default defineFirmRoute({ roles: SIGNERS, project: true, body: signoffCreateSchema, status: 201 }, ({ event, ctx, project, body }) =>
  createSignoff(ctx, project, idParam(event, 'number'), body))
