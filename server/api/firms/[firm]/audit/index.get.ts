// GET /api/firms/:firm/audit — the audit log, filtered by action, user and date; ?format=csv downloads it
import { AUDITORS } from '../../../../../shared/roles'
import { auditCsv, auditQuerySchema, listAudit } from '../../../../../server/services/audit-log'

export default defineApiHandler(async (event) => {
  const ctx = await requireFirmMember(event, AUDITORS)
  const query = parseQuery(event, auditQuerySchema)
  if (query.format === 'csv') {
    setResponseHeader(event, 'content-type', 'text/csv; charset=utf-8')
    setResponseHeader(event, 'content-disposition', `attachment; filename="${ctx.firm.slug}-audit-log.csv"`)
    return auditCsv(ctx, query)
  }
  return listAudit(ctx, query)
})
