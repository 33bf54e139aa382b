// PATCH /api/firms/:firm/crews/:crew — rename a crew or set its members (owner, party chief)
import { crewUpdateSchema } from '../../../../../shared/schemas/fielddata'
import { updateCrew } from '../../../../services/crews'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, ['owner', 'party_chief'])
  const id = idParam(event, 'crew')
  const body = await parseBody(event, crewUpdateSchema)
  return updateCrew(ctx, id, body)
})
