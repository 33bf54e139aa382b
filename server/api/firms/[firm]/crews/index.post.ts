// POST /api/firms/:firm/crews — create a crew { name, memberIds? } (owner, party chief)
import { crewSchema } from '../../../../../shared/schemas/fielddata'
import { createCrew } from '../../../../services/crews'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, ['owner', 'party_chief'])
  const body = await parseBody(event, crewSchema)
  const crew = await createCrew(ctx, body)
  setResponseStatus(event, 201)
  return crew
})
