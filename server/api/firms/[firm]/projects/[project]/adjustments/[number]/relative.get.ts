// GET /api/firms/:firm/projects/:project/adjustments/:number/relative — relative precisions of connected pairs by page (?page, size ≤ 500, sort, q, passes)
import { STAFF } from '../../../../../../../../shared/roles'
import { relativePageQuery } from '../../../../../../../../shared/schemas/run-results'
import { runRelative } from '../../../../../../../services/adjustments'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, STAFF)
  const project = await requireProject(event, ctx)
  const number = idParam(event, 'number')
  const query = parseQuery(event, relativePageQuery)
  return runRelative(ctx, project, number, query)
})
