// POST /api/firms/:firm/tolerance-profiles — add an accuracy standard (owner, party chief, licensed surveyor)
import { CHIEFS } from '../../../../../shared/roles'
import { toleranceCreateSchema } from '../../../../../shared/schemas/tolerance'
import { createToleranceProfile } from '../../../../services/tolerance'

export default defineFirmRoute({ roles: CHIEFS, body: toleranceCreateSchema, status: 201 }, ({ ctx, body }) => createToleranceProfile(ctx, body))
