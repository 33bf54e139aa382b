// PATCH /api/firms/:firm/projects/:project/stations/:station — edit a station; a new name is carried into every observation
import { CHIEFS } from '../../../../../../../shared/roles'
import { stationUpdateSchema } from '../../../../../../../shared/schemas/fielddata'
import { updateStation } from '../../../../../../services/stations'

export default defineFirmRoute({ roles: CHIEFS, project: true, body: stationUpdateSchema }, ({ event, ctx, project, body }) =>
  updateStation(ctx, project, idParam(event, 'station'), body))
