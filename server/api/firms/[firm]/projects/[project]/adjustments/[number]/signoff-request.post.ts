// POST /api/firms/:firm/projects/:project/adjustments/:number/signoff-request — ask the firm's licensed surveyors to sign off a run
import { z } from 'zod'
import { CHIEFS } from '../../../../../../../../shared/roles'
import { requestSignoff } from '../../../../../../../../server/services/signoffs'

const bodySchema = z.object({ note: z.string().trim().max(2000).optional() }).strict()

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, CHIEFS)
  const project = await requireProject(event, ctx)
  const number = idParam(event, 'number')
  const body = await parseBody(event, bodySchema)
  const out = await requestSignoff(ctx, project, number, body.note)
  setResponseStatus(event, 202)
  return out
})
