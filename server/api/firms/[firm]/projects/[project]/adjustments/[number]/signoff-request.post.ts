// POST /api/firms/:firm/projects/:project/adjustments/:number/signoff-request — ask the firm's licensed surveyors to sign off a run
import { CHIEFS } from '../../../../../../../../shared/roles'
import { signoffRequestSchema } from '../../../../../../../../shared/schemas/signoffs'
import { requestSignoff } from '../../../../../../../services/signoffs'

export default defineFirmRoute({ roles: CHIEFS, project: true, body: signoffRequestSchema, status: 202 }, ({ event, ctx, project, body }) =>
  requestSignoff(ctx, project, idParam(event, 'number'), body.note))
