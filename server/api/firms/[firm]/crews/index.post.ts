// POST /api/firms/:firm/crews — create a crew { name, memberIds? } (owner, party chief, licensed surveyor)
import { CHIEFS } from '../../../../../shared/roles'
import { crewSchema } from '../../../../../shared/schemas/fielddata'
import { createCrew } from '../../../../services/crews'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, CHIEFS)
  const body = await parseBody(event, crewSchema)
  const crew = await createCrew(ctx, body)
  setResponseStatus(event, 201)
  return crew
})
