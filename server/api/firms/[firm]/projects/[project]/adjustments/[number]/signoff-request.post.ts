// POST /api/firms/:firm/projects/:project/adjustments/:number/signoff-request — ask the firm's licensed surveyors to sign off a run
import { z } from 'zod'
import { CHIEFS, STAFF } from '../../../../../../../../shared/roles'
import { requestSignoff } from '../../../../../../../../server/services/signoffs'

const bodySchema = z.object({ note: z.string().trim().max(2000).optional() }).strict()

export default defineApiHandler(async (event) => {
  // project first, so another firm's project answers 404 whatever the role
  const ctx = await requireFirmMember(event, STAFF)
  const project = await requireProject(event, ctx)
  if (!CHIEFS.includes(ctx.role)) throw forbidden()
  const number = idParam(event, 'number')
  const body = await parseBody(event, bodySchema)
  const out = await requestSignoff(ctx, project, number, body.note)
  setResponseStatus(event, 202)
  return out
})
