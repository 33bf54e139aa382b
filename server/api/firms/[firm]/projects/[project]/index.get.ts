// GET /api/firms/:firm/projects/:project — one project with its counts of stations, observations and runs
import { getProjectWithCounts } from '../../../../../services/projects'

export default defineFirmRoute({ project: true }, ({ ctx, project }) => getProjectWithCounts(ctx, project))
