// POST /api/firms/:firm/projects/:project/adjustments/:number/signoffs — licensed sign-off of a finished run
// (a signed-in browser session only, never an API token; the password check is throttled like a sign-in)
import { SIGNERS } from '../../../../../../../../shared/roles'
import { signoffCreateSchema } from '../../../../../../../../shared/schemas/signoffs'
import { createSignoff } from '../../../../../../../services/signoffs'

export default defineFirmRoute({ roles: SIGNERS, project: true, session: true, body: signoffCreateSchema, status: 201 }, ({ event, ctx, project, body }) =>
  createSignoff(ctx, project, idParam(event, 'number'), body, clientIp(event)))
