// The audit log: who did what, when, with hashes of the before and after state.
import { auditLog } from '../db/schema'
import type { Db, Tx } from '../db/client'
import { sha256Hex } from './passwords'

export interface AuditEntry {
  firmId: number
  userId: number | null
  action: string
  entityType: string
  entityId?: string | number | null
  projectId?: number | null
  before?: unknown
  after?: unknown
}

const hashOf = (v: unknown) => (v === undefined || v === null ? null : sha256Hex(JSON.stringify(v)))

export async function audit(db: Db | Tx, e: AuditEntry): Promise<void> {
  await db.insert(auditLog).values({
    firmId: e.firmId,
    userId: e.userId,
    action: e.action,
    entityType: e.entityType,
    entityId: e.entityId === undefined || e.entityId === null ? null : String(e.entityId),
    projectId: e.projectId ?? null,
    before: e.before ?? null,
    after: e.after ?? null,
    beforeHash: hashOf(e.before),
    afterHash: hashOf(e.after),
  })
}
