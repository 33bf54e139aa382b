// POST /api/firms/:firm/projects/:project/adjustments/:number/exclude — exclude one observation and queue a run with this run's settings (202)
import { CHIEFS } from '../../../../../../../../shared/roles'
import { excludeBodySchema } from '../../../../../../../../shared/schemas/adjustments'
import { excludeAndRerun } from '../../../../../../../services/adjustments'

export default defineFirmRoute({ roles: CHIEFS, project: true, body: excludeBodySchema, status: 202 }, ({ event, ctx, project, body }) =>
  excludeAndRerun(ctx, project, idParam(event, 'number'), body.observationId))
