// POST /api/firms/:firm/projects/:project/adjustments — queue an adjustment run (202 { number, status })
import { CHIEFS } from '../../../../../../../shared/roles'
import { runSettingsSchema } from '../../../../../../../shared/schemas/adjustments'
import { queueRun } from '../../../../../../services/adjustments'

export default defineFirmRoute({ roles: CHIEFS, project: true, body: runSettingsSchema, status: 202 }, ({ ctx, project, body }) =>
  queueRun(ctx, project, body))
