// GET /api/firms/:firm/projects/:project/adjustments/:number/export/coordinates.csv — the run's coordinates as CSV in project units, streamed
import { STAFF } from '../../../../../../../../../shared/roles'
import { exportCsv } from '../../../../../../../../services/adjustments'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, STAFF)
  const project = await requireProject(event, ctx)
  const file = await exportCsv(ctx, project, idParam(event, 'number'), 'coordinates')
  setResponseHeader(event, 'content-type', 'text/csv; charset=utf-8')
  setResponseHeader(event, 'content-disposition', `attachment; filename="${file.fileName}"`)
  return sendStream(event, file.stream)
})
