// POST /api/firms/:firm/projects/:project/adjustments/:number/exclude — exclude one observation and queue a run with this run's settings (202)
import { CHIEFS } from '../../../../../../../../shared/roles'
import { excludeBodySchema } from '../../../../../../../../shared/schemas/adjustments'
import { excludeAndRerun } from '../../../../../../../services/adjustments'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, CHIEFS)
  const project = await requireProject(event, ctx)
  const number = idParam(event, 'number')
  const body = await parseBody(event, excludeBodySchema)
  const run = await excludeAndRerun(ctx, project, number, body.observationId)
  setResponseStatus(event, 202)
  return run
})
