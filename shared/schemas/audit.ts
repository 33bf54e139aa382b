// Audit-log queries (filters, paging, CSV).
import { z } from 'zod'

const day = z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'must be a date written YYYY-MM-DD')
export const auditQuerySchema = z.object({
  /** exact action ('signoff.create') or a prefix ending in '.' ('release.') */
  action: z.string().trim().max(80).optional(),
  user: z.coerce.number().int().positive().optional(),
  from: day.optional(),
  to: day.optional(),
  format: z.enum(['json', 'csv']).default('json'),
  limit: z.coerce.number().int().min(1).max(1000).default(200),
  offset: z.coerce.number().int().min(0).max(10_000_000, 'is beyond the end of the log').default(0),
})
export type AuditQuery = z.infer<typeof auditQuerySchema>
