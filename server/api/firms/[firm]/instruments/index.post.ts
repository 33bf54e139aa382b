// POST /api/firms/:firm/instruments — create an instrument profile (owner, party chief, licensed surveyor)
import { CHIEFS } from '../../../../../shared/roles'
import { instrumentSchema } from '../../../../../shared/schemas/fielddata'
import { createInstrument } from '../../../../services/instruments'

export default defineFirmRoute({ roles: CHIEFS, body: instrumentSchema, status: 201 }, ({ ctx, body }) => createInstrument(ctx, body))
