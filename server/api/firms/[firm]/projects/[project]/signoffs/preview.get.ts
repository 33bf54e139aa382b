// GET /api/firms/:firm/projects/:project/signoffs/preview?run=N[&page=&size=] — accuracy check, run summary, control points and one page of the stations of a run before signing
import { STAFF } from '../../../../../../../shared/roles'
import { signoffPreviewQuerySchema } from '../../../../../../../shared/schemas/signoffs'
import { previewSignoff } from '../../../../../../services/signoffs'

export default defineFirmRoute({ roles: STAFF, project: true, query: signoffPreviewQuerySchema }, ({ ctx, project, query }) =>
  previewSignoff(ctx, project, query))
