// POST /api/firms/:firm/projects/:project/observation-sets/manual — observations typed into the grid, validated like a file; 201 or 422 per row
import { STAFF } from '../../../../../../../shared/roles'
import { manualObservationsSchema } from '../../../../../../../shared/schemas/fielddata'
import { addManualObservations } from '../../../../../../services/observations'

export default defineFirmRoute({ roles: STAFF, project: true, crewAssigned: true, body: manualObservationsSchema, status: 201 }, ({ ctx, project, body }) =>
  addManualObservations(ctx, project, body))
