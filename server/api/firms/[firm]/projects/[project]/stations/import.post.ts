// POST /api/firms/:firm/projects/:project/stations/import — control coordinates from a CSV (multipart `file`, or JSON { text });
// name,east,north[,height][,sdEast,sdNorth,sdHeight] in project units, σ in mm; all-or-nothing with line errors
import { z } from 'zod'
import { CHIEFS } from '../../../../../../../shared/roles'
import { importControlCsv } from '../../../../../../services/stations'

const MAX_CONTROL_BYTES = 5 * 1024 * 1024

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, CHIEFS)
  const project = await requireProject(event, ctx)
  let text: string
  if ((getRequestHeader(event, 'content-type') ?? '').startsWith('multipart/form-data')) {
    const form = await readUploadForm(event, MAX_CONTROL_BYTES, () => new ApiError(413, 'The control file is larger than 5 MB'))
    if (!form.file) throw new ApiError(422, 'Attach the file in the multipart field `file`', [{ field: 'file', message: 'file: is missing' }])
    text = form.file.data.toString('utf8')
  } else {
    text = (await parseBody(event, z.object({ text: z.string().min(1, 'is blank').max(MAX_CONTROL_BYTES) }).strict())).text
  }
  return importControlCsv(ctx, project, text)
})
