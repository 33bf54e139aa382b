// PATCH /api/firms/:firm/instruments/:instrument — edit an instrument profile (owner, party chief, licensed surveyor)
import { CHIEFS } from '../../../../../shared/roles'
import { instrumentUpdateSchema } from '../../../../../shared/schemas/fielddata'
import { updateInstrument } from '../../../../services/instruments'

export default defineFirmRoute({ roles: CHIEFS, body: instrumentUpdateSchema }, ({ event, ctx, body }) =>
  updateInstrument(ctx, idParam(event, 'instrument'), body))
