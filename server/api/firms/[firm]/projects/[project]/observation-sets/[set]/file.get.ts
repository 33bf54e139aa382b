// GET /api/firms/:firm/projects/:project/observation-sets/:set/file — the original bytes, exactly as uploaded
import { STAFF } from '../../../../../../../../shared/roles'
import { getObservationSetFile } from '../../../../../../../services/observations'

export default defineFirmRoute({ roles: STAFF, project: true }, async ({ event, ctx, project }) => {
  const file = await getObservationSetFile(ctx, project, idParam(event, 'set'))
  const ascii = file.fileName.replace(/[^\x20-\x7e]/g, '_').replace(/["\\]/g, '_')
  setResponseHeaders(event, {
    'content-type': file.contentType,
    'content-disposition': `attachment; filename="${ascii}"; filename*=UTF-8''${encodeURIComponent(file.fileName)}`,
    'x-content-sha256': file.sha256,
    'cache-control': 'private, no-store',
  })
  return file.content
})
