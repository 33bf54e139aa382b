// POST /api/firms/:firm/projects/:project/observation-sets — upload a Tiepoint CSV or LandXML 1.2 file (multipart field `file`,
// optional crewId, instrumentProfileId); all-or-nothing: 201, 422 with every bad line, 409 duplicate, 413 too large
import { STAFF } from '../../../../../../../shared/roles'
import { MAX_UPLOAD_BYTES, tooLarge, uploadObservationSet } from '../../../../../../services/observations'

export default defineFirmRoute({ roles: STAFF, project: true, crewAssigned: true, multipart: 'only', status: 201 }, async ({ event, ctx, project }) => {
  const form = await readUploadForm(event, MAX_UPLOAD_BYTES, tooLarge)
  if (!form.file) throw invalid('Attach the file in the multipart field `file`', [{ field: 'file', message: 'file: is missing' }])
  return uploadObservationSet(ctx, project, {
    name: form.file.name,
    bytes: form.file.data,
    crewId: formId(form.fields, 'crewId'),
    instrumentProfileId: formId(form.fields, 'instrumentProfileId'),
  })
})
