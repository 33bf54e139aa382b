// GET /api/firms/:firm/projects/:project/signoffs/preview?run=N — accuracy check, run summary and stations of a run before signing
import { z } from 'zod'
import { STAFF } from '../../../../../../../shared/roles'
import { previewSignoff } from '../../../../../../../server/services/signoffs'

const querySchema = z.object({ run: z.coerce.number().int().positive() })

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, STAFF)
  const project = await requireProject(event, ctx)
  const { run } = parseQuery(event, querySchema)
  return previewSignoff(ctx, project, run)
})
