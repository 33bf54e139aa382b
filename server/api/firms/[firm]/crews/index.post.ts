// POST /api/firms/:firm/crews — create a crew { name, memberIds? } (owner, party chief, licensed surveyor)
import { CHIEFS } from '../../../../../shared/roles'
import { crewSchema } from '../../../../../shared/schemas/fielddata'
import { createCrew } from '../../../../services/crews'

export default defineFirmRoute({ roles: CHIEFS, body: crewSchema, status: 201 }, ({ ctx, body }) => createCrew(ctx, body))
