// PATCH /api/firms/:firm/crews/:crew — rename a crew or set its members (owner, party chief, licensed surveyor)
import { CHIEFS } from '../../../../../shared/roles'
import { crewUpdateSchema } from '../../../../../shared/schemas/fielddata'
import { updateCrew } from '../../../../services/crews'

export default defineFirmRoute({ roles: CHIEFS, body: crewUpdateSchema }, ({ event, ctx, body }) =>
  updateCrew(ctx, idParam(event, 'crew'), body))
