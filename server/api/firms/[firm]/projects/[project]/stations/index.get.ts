// GET /api/firms/:firm/projects/:project/stations — stations with control values (metres) and observation counts
import { STAFF } from '../../../../../../../shared/roles'
import { listStations } from '../../../../../../services/stations'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, STAFF)
  const project = await requireProject(event, ctx)
  return listStations(ctx, project)
})
