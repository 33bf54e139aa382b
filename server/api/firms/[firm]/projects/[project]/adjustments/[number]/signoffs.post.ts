// POST /api/firms/:firm/projects/:project/adjustments/:number/signoffs — licensed sign-off of a finished run
import { SIGNERS } from '../../../../../../../../shared/roles'
import { createSignoff, signoffCreateSchema } from '../../../../../../../../server/services/signoffs'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, SIGNERS)
  const project = await requireProject(event, ctx)
  const number = idParam(event, 'number')
  const body = await parseBody(event, signoffCreateSchema)
  const signoff = await createSignoff(ctx, project, number, body)
  setResponseStatus(event, 201)
  return signoff
})
