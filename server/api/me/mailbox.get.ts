// GET /api/me/mailbox — development mailbox: the messages addressed to the signed-in person (only without SMTP_URL, on loopback)
import { listMailbox } from '../../services/mailbox'

export default defineUserRoute({}, ({ user }) => listMailbox(user))
