// GET /api/firms/:firm/audit — the audit log, filtered by action, user and date; ?format=csv downloads it
import { AUDITORS } from '../../../../../shared/roles'
import { auditQuerySchema } from '../../../../../shared/schemas/audit'
import { auditCsv, listAudit } from '../../../../services/audit-log'

export default defineFirmRoute({ roles: AUDITORS, query: auditQuerySchema }, async ({ event, ctx, query }) => {
  if (query.format === 'csv') {
    setResponseHeader(event, 'content-type', 'text/csv; charset=utf-8')
    setResponseHeader(event, 'content-disposition', `attachment; filename="${ctx.firm.slug}-audit-log.csv"`)
    return auditCsv(ctx, query)
  }
  return listAudit(ctx, query)
})
