// GET /api/me/activity — one's own person-level audit events (sign-ins, password, tokens, profile, mailbox), newest first
import { listPersonAudit } from '../../services/audit-log'

export default defineUserRoute({}, ({ user }) => listPersonAudit(user))
