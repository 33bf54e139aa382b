// PATCH /api/firms/:firm/instruments/:instrument — edit an instrument profile (owner, party chief, licensed surveyor)
import { CHIEFS } from '../../../../../shared/roles'
import { instrumentUpdateSchema } from '../../../../../shared/schemas/fielddata'
import { updateInstrument } from '../../../../services/instruments'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, CHIEFS)
  const id = idParam(event, 'instrument')
  const body = await parseBody(event, instrumentUpdateSchema)
  return updateInstrument(ctx, id, body)
})
