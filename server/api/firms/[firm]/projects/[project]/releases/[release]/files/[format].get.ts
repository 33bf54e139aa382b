// GET /api/firms/:firm/projects/:project/releases/:release/files/:format — download a deliverable (logged)
import { downloadReleaseFile } from '../../../../../../../../services/releases'

export default defineFirmRoute({ project: true }, async ({ event, ctx, project }) => {
  const format = getRouterParam(event, 'format') ?? ''
  const file = await downloadReleaseFile(ctx, project, idParam(event, 'release'), format, clientIp(event))
  setResponseHeader(event, 'content-type', file.contentType)
  setResponseHeader(event, 'content-disposition', `attachment; filename="${file.fileName}"`)
  setResponseHeader(event, 'x-content-sha256', file.sha256)
  return file.content
})
