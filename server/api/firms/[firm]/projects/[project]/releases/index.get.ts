// GET /api/firms/:firm/projects/:project/releases — releases with their files and SHA-256 (clients: shared projects only)
import { listReleases } from '../../../../../../services/releases'

export default defineFirmRoute({ project: true }, ({ ctx, project }) => listReleases(ctx, project))
