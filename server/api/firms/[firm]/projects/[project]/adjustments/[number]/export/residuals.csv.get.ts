// GET /api/firms/:firm/projects/:project/adjustments/:number/export/residuals.csv — the run's residuals as CSV in project units
import { STAFF } from '../../../../../../../../../shared/roles'
import { exportCsv } from '../../../../../../../../services/adjustments'

export default defineFirmRoute({ roles: STAFF, project: true }, async ({ event, ctx, project }) => {
  const file = await exportCsv(ctx, project, idParam(event, 'number'), 'residuals')
  setResponseHeader(event, 'content-type', 'text/csv; charset=utf-8')
  setResponseHeader(event, 'content-disposition', `attachment; filename="${file.fileName}"`)
  return file.text
})
