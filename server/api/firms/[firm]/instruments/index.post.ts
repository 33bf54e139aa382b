// POST /api/firms/:firm/instruments — create an instrument profile (owner, party chief)
import { instrumentSchema } from '../../../../../shared/schemas/fielddata'
import { createInstrument } from '../../../../services/instruments'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, ['owner', 'party_chief'])
  const body = await parseBody(event, instrumentSchema)
  const row = await createInstrument(ctx, body)
  setResponseStatus(event, 201)
  return row
})
