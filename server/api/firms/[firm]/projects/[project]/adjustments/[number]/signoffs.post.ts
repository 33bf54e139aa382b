// POST /api/firms/:firm/projects/:project/adjustments/:number/signoffs — licensed sign-off of a finished run
import { SIGNERS, STAFF } from '../../../../../../../../shared/roles'
import { createSignoff, signoffCreateSchema } from '../../../../../../../../server/services/signoffs'

export default defineApiHandler(async (event) => {
  // project first, so another firm's project answers 404 whatever the role
  const ctx = await requireFirmMember(event, STAFF)
  const project = await requireProject(event, ctx)
  if (!SIGNERS.includes(ctx.role)) throw forbidden()
  const number = idParam(event, 'number')
  const body = await parseBody(event, signoffCreateSchema)
  const signoff = await createSignoff(ctx, project, number, body)
  setResponseStatus(event, 201)
  return signoff
})
