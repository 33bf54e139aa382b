// POST /api/firms/:firm/projects/:project/crews — assign a crew { crewId } to the project
import { projectCrewSchema } from '../../../../../../../shared/schemas/fielddata'
import { CHIEFS } from '../../../../../../../shared/roles'
import { assignCrew } from '../../../../../../services/crews'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, CHIEFS)
  const project = await requireProject(event, ctx)
  const body = await parseBody(event, projectCrewSchema)
  const crews = await assignCrew(ctx, project, body.crewId)
  setResponseStatus(event, 201)
  return crews
})
