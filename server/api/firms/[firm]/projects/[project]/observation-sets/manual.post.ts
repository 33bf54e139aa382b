// POST /api/firms/:firm/projects/:project/observation-sets/manual — observations typed into the grid, validated like a file; 201 or 422 per row
import { manualObservationsSchema } from '../../../../../../../shared/schemas/fielddata'
import { STAFF } from '../../../../../../../shared/roles'
import { addManualObservations } from '../../../../../../services/observations'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, STAFF)
  const project = await requireProject(event, ctx)
  await requireCrewAssignment(ctx, project)
  const body = await parseBody(event, manualObservationsSchema)
  const result = await addManualObservations(ctx, project, body)
  setResponseStatus(event, 201)
  return result
})
