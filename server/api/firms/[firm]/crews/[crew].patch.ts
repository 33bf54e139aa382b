// PATCH /api/firms/:firm/crews/:crew — rename a crew or set its members (owner, party chief, licensed surveyor)
import { CHIEFS } from '../../../../../shared/roles'
import { crewUpdateSchema } from '../../../../../shared/schemas/fielddata'
import { updateCrew } from '../../../../services/crews'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, CHIEFS)
  const id = idParam(event, 'crew')
  const body = await parseBody(event, crewUpdateSchema)
  return updateCrew(ctx, id, body)
})
