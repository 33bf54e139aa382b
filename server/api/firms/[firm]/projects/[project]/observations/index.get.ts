// GET /api/firms/:firm/projects/:project/observations — one page of observations (filters setId, kind, station, excluded; sort, dir, page, pageSize)
import { observationQuerySchema } from '../../../../../../../shared/schemas/fielddata'
import { STAFF } from '../../../../../../../shared/roles'
import { listObservations } from '../../../../../../services/observations'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, STAFF)
  const project = await requireProject(event, ctx)
  const query = parseQuery(event, observationQuerySchema)
  return listObservations(ctx, project, query)
})
