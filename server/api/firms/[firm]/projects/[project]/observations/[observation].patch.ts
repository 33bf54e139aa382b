// PATCH /api/firms/:firm/projects/:project/observations/:observation — edit the value or exclude/include (audited; the file never changes)
import { STAFF } from '../../../../../../../shared/roles'
import { observationPatchSchema } from '../../../../../../../shared/schemas/fielddata'
import { updateObservation } from '../../../../../../services/observations'

export default defineFirmRoute({ roles: STAFF, project: true, crewAssigned: true, body: observationPatchSchema }, ({ event, ctx, project, body }) =>
  updateObservation(ctx, project, idParam(event, 'observation'), body))
