// The audit log: who did what, when, with hashes of the before and after state.
// `audit()` is the one function that writes a row; everything else (firm
// events, person-level events) goes through it.
//
// Firm events carry the firm. Person-level events — sign-in (success and
// failure), password change and reset, API tokens, profile and licence
// edits, development-mailbox reads — belong to no firm: their firm_id is null
// and they are shown to that person on their profile page, not in any firm's log.
import { auditLog } from '../db/schema'
import type { Db, Tx } from '../db/client'
import { useDb } from '../db/client'
import { sha256Hex } from './passwords'

export interface AuditEntry {
  /** null for a person-level event */
  firmId: number | null
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

/** A person-level event (no firm), e.g. 'signin.success', 'password.change', 'token.create'. */
export function auditPerson(userId: number | null, action: string, after?: unknown, opts: { db?: Db | Tx; before?: unknown } = {}): Promise<void> {
  return audit(opts.db ?? useDb(), { firmId: null, userId, action, entityType: 'person', entityId: userId, before: opts.before, after })
}
