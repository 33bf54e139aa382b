// POST /api/firms/:firm/projects/:project/crews — assign a crew { crewId } to the project
import { CHIEFS } from '../../../../../../../shared/roles'
import { projectCrewSchema } from '../../../../../../../shared/schemas/fielddata'
import { assignCrew } from '../../../../../../services/crews'

export default defineFirmRoute({ roles: CHIEFS, project: true, body: projectCrewSchema, status: 201 }, ({ ctx, project, body }) =>
  assignCrew(ctx, project, body.crewId))
