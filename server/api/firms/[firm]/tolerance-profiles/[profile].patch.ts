// PATCH /api/firms/:firm/tolerance-profiles/:profile — edit, retire or restore an accuracy standard (owner, party chief, licensed surveyor)
import { CHIEFS } from '../../../../../shared/roles'
import { toleranceUpdateSchema } from '../../../../../shared/schemas/tolerance'
import { updateToleranceProfile } from '../../../../services/tolerance'

export default defineFirmRoute({ roles: CHIEFS, body: toleranceUpdateSchema }, ({ event, ctx, body }) =>
  updateToleranceProfile(ctx, idParam(event, 'profile'), body))
