// The audit log: who did what, when, with hashes of the before and after state.
// `audit()` is the one function that writes a row; everything else (firm
// events, person-level events) goes through it.
//
// Firm events carry the firm. Person-level events — sign-in (success and
// failure), password change and reset, API tokens, profile and licence
// edits, development-mailbox reads — belong to no firm: their firm_id is null
// and they are shown to that person on their profile page, not in any firm's log.
//
// Every entry is a link of a hash chain, one per firm and one for the
// person-level events (firm_id null): rowHash = SHA-256 of the
// previous entry's rowHash and this entry's content (canonical JSON, object
// keys sorted), so changing, removing or re-ordering an entry breaks every
// later link (`npm run audit:verify`). Inserts of one chain are serialised by
// a transaction-scoped advisory lock, held until the surrounding transaction
// ends, so two concurrent writers can never link to the same head.
import { asc, and, desc, eq, gt, isNull, sql } from 'drizzle-orm'
import type { SQL } from 'drizzle-orm'
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

/** Advisory-lock namespace of the audit chains: (NS, firm id), (NS, 0) for person-level events. */
const AUDIT_LOCK_NS = 7032

/** The rows of one chain: a firm's, or the person-level events'. */
const chainOf = (firmId: number | null): SQL => (firmId === null ? isNull(auditLog.firmId) : eq(auditLog.firmId, firmId))


/** The value as jsonb will give it back: dates as strings, undefined dropped. */
const asStored = (v: unknown): unknown => (v === undefined || v === null ? null : JSON.parse(JSON.stringify(v)))

/** JSON with object keys sorted at every level: jsonb does not keep key order. */
export function canonicalJson(v: unknown): string {
  if (v === null || typeof v !== 'object') return JSON.stringify(v ?? null)
  if (Array.isArray(v)) return `[${v.map(canonicalJson).join(',')}]`
  const o = v as Record<string, unknown>
  return `{${Object.keys(o).sort().map((k) => `${JSON.stringify(k)}:${canonicalJson(o[k])}`).join(',')}}`
}

/** SHA-256 of a state, in canonical JSON so that it can be recomputed from the stored jsonb. */
const hashOf = (v: unknown) => (v === undefined || v === null ? null : sha256Hex(canonicalJson(v)))

export interface ChainedContent {
  firmId: number | null
  userId: number | null
  action: string
  entityType: string
  entityId: string | null
  projectId: number | null
  beforeHash: string | null
  afterHash: string | null
  before: unknown
  after: unknown
  at: Date
}

export function auditRowHash(prevHash: string | null, r: ChainedContent): string {
  return sha256Hex(`${prevHash ?? ''}\n${canonicalJson([
    r.firmId, r.userId, r.action, r.entityType, r.entityId, r.projectId, r.beforeHash, r.afterHash, r.before ?? null, r.after ?? null, r.at.toISOString(),
  ])}`)
}

async function head(tx: Db | Tx, firmId: number | null): Promise<string | null> {
  const [last] = await tx.select({ rowHash: auditLog.rowHash }).from(auditLog)
    .where(chainOf(firmId)).orderBy(desc(auditLog.id)).limit(1)
  return last?.rowHash ?? null
}

export async function audit(db: Db | Tx, e: AuditEntry): Promise<void> {
  // On a transaction this is a savepoint; the advisory lock lasts until the outer transaction ends.
  await db.transaction(async (tx) => {
    await tx.execute(sql`select pg_advisory_xact_lock(${AUDIT_LOCK_NS}, ${e.firmId ?? 0})`)
    const before = asStored(e.before)
    const after = asStored(e.after)
    const content: ChainedContent = {
      firmId: e.firmId,
      userId: e.userId,
      action: e.action,
      entityType: e.entityType,
      entityId: e.entityId === undefined || e.entityId === null ? null : String(e.entityId),
      projectId: e.projectId ?? null,
      beforeHash: hashOf(before),
      afterHash: hashOf(after),
      before,
      after,
      at: new Date(),
    }
    const prevHash = await head(tx, e.firmId)
    await tx.insert(auditLog).values({ ...content, prevHash, rowHash: auditRowHash(prevHash, content) })
  })
}

export interface ChainProblem { firmId: number | null; id: number; message: string }

/**
 * Walks every firm's chain in id order and recomputes each link. Finds an
 * edited entry (its hash no longer matches), a removed or inserted one (the
 * next entry's prevHash does not match) and an entry outside the chain.
 */
export async function verifyAuditChain(db: Db | Tx, opts: { batch?: number } = {}): Promise<{ firms: number; entries: number; problems: ChainProblem[] }> {
  const batch = opts.batch ?? 2000
  const firmRows = await db.selectDistinct({ firmId: auditLog.firmId }).from(auditLog).orderBy(auditLog.firmId)
  const problems: ChainProblem[] = []
  let entries = 0
  for (const { firmId } of firmRows) {
    let prev: string | null = null
    let lastId = 0
    for (;;) {
      const rows = await db.select().from(auditLog).where(and(chainOf(firmId), gt(auditLog.id, lastId))).orderBy(asc(auditLog.id)).limit(batch)
      for (const r of rows) {
        entries++
        lastId = r.id
        if (r.rowHash === null) {
          problems.push({ firmId, id: r.id, message: 'has no hash: it was written outside the audit chain' })
          continue
        }
        if (r.prevHash !== prev) problems.push({ firmId, id: r.id, message: 'does not link to the entry before it: an entry was removed, inserted or re-ordered' })
        const expected = auditRowHash(r.prevHash, { ...r, before: r.before, after: r.after })
        if (r.beforeHash !== hashOf(r.before) || r.afterHash !== hashOf(r.after) || expected !== r.rowHash) {
          problems.push({ firmId, id: r.id, message: 'its content does not match its hash: the entry was changed after it was written' })
        }
        prev = r.rowHash
      }
      if (rows.length < batch) break
    }
  }
  return { firms: firmRows.length, entries, problems }
}

/** Links entries written before the chain existed (run by the migration, as the owner role). */
export async function backfillAuditChain(db: Db): Promise<number> {
  const firms = await db.selectDistinct({ firmId: auditLog.firmId }).from(auditLog).where(isNull(auditLog.rowHash))
  let n = 0
  for (const { firmId } of firms) {
    await db.transaction(async (tx) => {
      await tx.execute(sql`select pg_advisory_xact_lock(${AUDIT_LOCK_NS}, ${firmId ?? 0})`)
      const rows = await tx.select().from(auditLog).where(chainOf(firmId)).orderBy(asc(auditLog.id))
      let prev: string | null = null
      for (const r of rows) {
        if (r.rowHash === null) {
          const rowHash = auditRowHash(prev, r)
          await tx.update(auditLog).set({ prevHash: prev, rowHash, beforeHash: hashOf(r.before), afterHash: hashOf(r.after) }).where(eq(auditLog.id, r.id))
          prev = rowHash
          n++
        } else {
          prev = r.rowHash
        }
      }
    })
  }
  return n
}

/** A person-level event (no firm), e.g. 'signin.success', 'password.change', 'token.create'. */
export function auditPerson(userId: number | null, action: string, after?: unknown, opts: { db?: Db | Tx; before?: unknown } = {}): Promise<void> {
  return audit(opts.db ?? useDb(), { firmId: null, userId, action, entityType: 'person', entityId: userId, before: opts.before, after })
}
