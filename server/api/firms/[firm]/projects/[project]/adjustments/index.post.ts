// POST /api/firms/:firm/projects/:project/adjustments — queue an adjustment run (202 { number, status })
import { CHIEFS } from '../../../../../../../shared/roles'
import { queueRun } from '../../../../../../services/adjustments'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, CHIEFS)
  const project = await requireProject(event, ctx)
  let body: unknown
  try {
    body = await readBody(event)
  } catch {
    throw new ApiError(400, 'The request body is not valid JSON')
  }
  const run = await queueRun(ctx, project, body ?? {})
  setResponseStatus(event, 202)
  return run
})
