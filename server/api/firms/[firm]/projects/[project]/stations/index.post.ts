// POST /api/firms/:firm/projects/:project/stations — create a station, or update the control of the station with that name (metres)
import { stationCreateSchema } from '../../../../../../../shared/schemas/fielddata'
import { CHIEFS } from '../../../../../../../shared/roles'
import { upsertStation } from '../../../../../../services/stations'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, CHIEFS)
  const project = await requireProject(event, ctx)
  const body = await parseBody(event, stationCreateSchema)
  const result = await upsertStation(ctx, project, body)
  setResponseStatus(event, result.created ? 201 : 200)
  return result.station
})
