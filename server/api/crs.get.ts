// GET /api/crs?q= — search the bundled projected coordinate systems
import { z } from 'zod'
import { searchCrs } from '../../shared/crs'

const query = z.object({ q: z.string().max(100).optional() })

export default defineApiHandler(async (event) => {
  await requireUser(event)
  const { q } = parseQuery(event, query)
  return searchCrs(q ?? '').map(({ code, name, unit }) => ({ code, name, unit }))
})
