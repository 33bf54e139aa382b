// PATCH /api/firms/:firm/projects/:project/observations/:observation — edit the value or exclude/include (audited; the file never changes)
import { observationPatchSchema } from '../../../../../../../shared/schemas/fielddata'
import { STAFF } from '../../../../../../../shared/roles'
import { updateObservation } from '../../../../../../services/observations'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, STAFF)
  const project = await requireProject(event, ctx)
  await requireCrewAssignment(ctx, project)
  const id = idParam(event, 'observation')
  const body = await parseBody(event, observationPatchSchema)
  return updateObservation(ctx, project, id, body)
})
