// PATCH /api/firms/:firm/projects/:project/stations/:station — edit a station; a new name is carried into every observation
import { stationUpdateSchema } from '../../../../../../../shared/schemas/fielddata'
import { CHIEFS } from '../../../../../../../shared/roles'
import { updateStation } from '../../../../../../services/stations'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, CHIEFS)
  const project = await requireProject(event, ctx)
  const id = idParam(event, 'station')
  const body = await parseBody(event, stationUpdateSchema)
  return updateStation(ctx, project, id, body)
})
