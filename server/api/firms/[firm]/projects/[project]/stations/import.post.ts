// POST /api/firms/:firm/projects/:project/stations/import — control coordinates from a CSV (multipart `file`, or JSON { text });
// name,east,north[,height][,sdEast,sdNorth,sdHeight] in project units, σ in mm; all-or-nothing with line errors
import { CHIEFS } from '../../../../../../../shared/roles'
import { controlImportTextSchema, MAX_CONTROL_BYTES } from '../../../../../../../shared/schemas/fielddata'
import { importControlCsv } from '../../../../../../services/stations'

export default defineFirmRoute({ roles: CHIEFS, project: true, body: controlImportTextSchema, multipart: 'also' }, async ({ event, ctx, project, body }) => {
  let text: string
  if (isMultipart(event)) {
    const form = await readUploadForm(event, MAX_CONTROL_BYTES, () => tooLarge('The control file is larger than 5 MB'))
    if (!form.file) throw invalid('Attach the file in the multipart field `file`', [{ field: 'file', message: 'file: is missing' }])
    text = form.file.data.toString('utf8')
  } else {
    text = body.text
  }
  return importControlCsv(ctx, project, text)
})
