// POST /api/firms/:firm/instruments — create an instrument profile (owner, party chief, licensed surveyor)
import { CHIEFS } from '../../../../../shared/roles'
import { instrumentSchema } from '../../../../../shared/schemas/fielddata'
import { createInstrument } from '../../../../services/instruments'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, CHIEFS)
  const body = await parseBody(event, instrumentSchema)
  const row = await createInstrument(ctx, body)
  setResponseStatus(event, 201)
  return row
})
