// GET /api/firms/:firm/projects/:project/observations — one page of observations (filters setId, kind, station, excluded; sort, dir, page, pageSize)
import { STAFF } from '../../../../../../../shared/roles'
import { observationQuerySchema } from '../../../../../../../shared/schemas/fielddata'
import { listObservations } from '../../../../../../services/observations'

export default defineFirmRoute({ roles: STAFF, project: true, query: observationQuerySchema }, ({ ctx, project, query }) =>
  listObservations(ctx, project, query))
