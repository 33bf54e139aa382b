// POST /api/firms/:firm/projects/:project/stations — create a station, or update the control of the station with that name (metres)
import { CHIEFS } from '../../../../../../../shared/roles'
import { stationCreateSchema } from '../../../../../../../shared/schemas/fielddata'
import { upsertStation } from '../../../../../../services/stations'

export default defineFirmRoute({ roles: CHIEFS, project: true, body: stationCreateSchema }, async ({ event, ctx, project, body }) => {
  const result = await upsertStation(ctx, project, body)
  setResponseStatus(event, result.created ? 201 : 200)
  return result.station
})
