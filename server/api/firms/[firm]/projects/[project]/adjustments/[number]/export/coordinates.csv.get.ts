// GET /api/firms/:firm/projects/:project/adjustments/:number/export/coordinates.csv — the run's coordinates as CSV in project units
import { STAFF } from '../../../../../../../../../shared/roles'
import { exportCsv } from '../../../../../../../../services/adjustments'

export default defineFirmRoute({ roles: STAFF, project: true }, async ({ event, ctx, project }) => {
  const file = await exportCsv(ctx, project, idParam(event, 'number'), 'coordinates')
  setResponseHeader(event, 'content-type', 'text/csv; charset=utf-8')
  setResponseHeader(event, 'content-disposition', `attachment; filename="${file.fileName}"`)
  return file.text
})
