// GET /api/firms/:firm/projects/:project — one project
import { projectDto } from '../../../../../services/projects'

export default defineFirmRoute({ project: true }, ({ project }) => projectDto(project))
