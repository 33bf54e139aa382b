// GET /api/firms/:firm/projects — the firm's projects with status and counts (clients: only shared ones)
import { listProjects } from '../../../../services/projects'

export default defineFirmRoute({}, ({ ctx }) => listProjects(ctx))
