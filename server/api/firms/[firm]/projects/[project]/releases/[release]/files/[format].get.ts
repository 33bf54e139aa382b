// GET /api/firms/:firm/projects/:project/releases/:release/files/:format — download a deliverable (logged)
import { downloadReleaseFile } from '../../../../../../../../../server/services/releases'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event)
  const project = await requireProject(event, ctx)
  const releaseId = idParam(event, 'release')
  const format = getRouterParam(event, 'format') ?? ''
  const file = await downloadReleaseFile(ctx, project, releaseId, format, getRequestIP(event, { xForwardedFor: true }) ?? null)
  setResponseHeader(event, 'content-type', file.contentType)
  setResponseHeader(event, 'content-disposition', `attachment; filename="${file.fileName}"`)
  setResponseHeader(event, 'x-content-sha256', file.sha256)
  return file.content
})
