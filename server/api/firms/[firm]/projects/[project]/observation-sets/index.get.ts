// GET /api/firms/:firm/projects/:project/observation-sets — uploaded files of the project with counts (no bytes)
import { STAFF } from '../../../../../../../shared/roles'
import { listObservationSets } from '../../../../../../services/observations'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, STAFF)
  const project = await requireProject(event, ctx)
  return listObservationSets(ctx, project)
})
