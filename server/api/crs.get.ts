// GET /api/crs?q= — search the bundled projected coordinate systems
import { searchCrs } from '../../shared/crs'
import { crsQuerySchema } from '../../shared/schemas/crs'

export default defineUserRoute({ query: crsQuerySchema }, ({ query }) =>
  searchCrs(query.q ?? '').map(({ code, name, unit }) => ({ code, name, unit })))
