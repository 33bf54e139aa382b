// GET /api/firms/:firm/instruments — the firm's instrument profiles (example presets carry their label)
import { STAFF } from '../../../../../shared/roles'
import { listInstruments } from '../../../../services/instruments'

export default defineFirmRoute({ roles: STAFF }, ({ ctx }) => listInstruments(ctx))
