// POST /api/firms/:firm/projects/:project/access — grant a client user access to the project's releases
import { CHIEFS } from '../../../../../../../shared/roles'
import { accessGrantSchema } from '../../../../../../../shared/schemas/access'
import { grantAccess } from '../../../../../../services/access'

export default defineFirmRoute({ roles: CHIEFS, project: true, body: accessGrantSchema }, async ({ event, ctx, project, body }) => {
  const out = await grantAccess(ctx, project, body)
  setResponseStatus(event, out.created ? 201 : 200)
  return out
})
