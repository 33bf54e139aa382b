// GET /api/firms/:firm/mailbox — development mailbox: mail to this firm's people (owners; only without SMTP_URL)
import { OWNERS } from '../../../../../shared/roles'
import { listMailbox } from '../../../../services/mailbox'

export default defineFirmRoute({ roles: OWNERS }, ({ ctx }) => listMailbox(ctx))
