// Reading the firm's audit log (owners and licensed surveyors): every upload,
// edit, exclusion, run, sign-off, release and download, filtered by action,
// person and date, as JSON pages or one CSV file.
import { and, desc, eq, gte, isNull, like, lt, sql } from 'drizzle-orm'
import type { SQL } from 'drizzle-orm'
import Papa from 'papaparse'
import { safeRows } from './csv'
import type { AuditQuery } from '../../shared/schemas/audit'
import { auditLog, projects, users } from '../db/schema'
import { useDb } from '../db/client'
import type { FirmContext, SessionUser } from '../utils/guard'


export interface AuditEntryDto {
  id: number
  at: string
  action: string
  entityType: string
  entityId: string | null
  projectId: number | null
  projectName: string | null
  userId: number | null
  userName: string | null
  userEmail: string | null
  beforeHash: string | null
  afterHash: string | null
  /** the hash chain (server/services/audit.ts): the previous entry's hash and this entry's */
  prevHash: string | null
  rowHash: string | null
  after: unknown
}

function conditions(ctx: FirmContext, q: AuditQuery): SQL {
  const where: SQL[] = [eq(auditLog.firmId, ctx.firm.id)]
  if (q.action) where.push(q.action.endsWith('.') ? like(auditLog.action, `${q.action.replace(/[%_\\]/g, '\\$&')}%`) : eq(auditLog.action, q.action))
  if (q.user) where.push(eq(auditLog.userId, q.user))
  if (q.from) where.push(gte(auditLog.at, new Date(`${q.from}T00:00:00Z`)))
  // `to` is inclusive: everything before the next day starts
  if (q.to) where.push(lt(auditLog.at, new Date(new Date(`${q.to}T00:00:00Z`).getTime() + 86_400_000)))
  return and(...where)!
}

export async function listAudit(ctx: FirmContext, q: AuditQuery): Promise<{ entries: AuditEntryDto[]; total: number; actions: string[]; people: { id: number; name: string }[] }> {
  const db = useDb()
  const where = conditions(ctx, q)
  const rows = await db.select({ a: auditLog, userName: users.name, userEmail: users.email, projectName: projects.name }).from(auditLog)
    .leftJoin(users, eq(users.id, auditLog.userId))
    .leftJoin(projects, and(eq(projects.id, auditLog.projectId), eq(projects.firmId, auditLog.firmId)))
    .where(where).orderBy(desc(auditLog.at), desc(auditLog.id)).limit(q.limit).offset(q.offset)
  const [{ total }] = await db.select({ total: sql<number>`count(*)::int` }).from(auditLog).where(where) as [{ total: number }]
  const actions = await db.selectDistinct({ action: auditLog.action }).from(auditLog).where(eq(auditLog.firmId, ctx.firm.id)).orderBy(auditLog.action)
  const people = await db.selectDistinct({ id: users.id, name: users.name }).from(auditLog)
    .innerJoin(users, eq(users.id, auditLog.userId)).where(eq(auditLog.firmId, ctx.firm.id)).orderBy(users.name)
  return {
    entries: rows.map(({ a, userName, userEmail, projectName }) => ({
      id: a.id, at: a.at.toISOString(), action: a.action, entityType: a.entityType, entityId: a.entityId,
      projectId: a.projectId, projectName: projectName ?? null, userId: a.userId, userName: userName ?? null, userEmail: userEmail ?? null,
      beforeHash: a.beforeHash, afterHash: a.afterHash, prevHash: a.prevHash, rowHash: a.rowHash, after: a.after,
    })),
    total,
    actions: actions.map((x) => x.action),
    people,
  }
}

export async function auditCsv(ctx: FirmContext, q: AuditQuery): Promise<string> {
  const { entries } = await listAudit(ctx, { ...q, limit: 1000, offset: 0 })
  const all: AuditEntryDto[] = [...entries]
  // page through everything the filter matches, 1000 rows at a time
  for (let offset = 1000; entries.length === 1000 && all.length === offset; offset += 1000) {
    const next = await listAudit(ctx, { ...q, limit: 1000, offset })
    all.push(...next.entries)
  }
  return Papa.unparse(safeRows(all.map((e) => ({
    at: e.at, action: e.action, user: e.userEmail ?? '', entity_type: e.entityType, entity_id: e.entityId ?? '',
    project_id: e.projectId ?? '', project: e.projectName ?? '', before_sha256: e.beforeHash ?? '', after_sha256: e.afterHash ?? '',
    prev_hash: e.prevHash ?? '', row_hash: e.rowHash ?? '',
    details: e.after === null || e.after === undefined ? '' : JSON.stringify(e.after),
  }))), { newline: '\r\n' }) + '\r\n'
}

export interface PersonEventDto {
  id: number
  at: string
  action: string
  /** what the event recorded: client address, token name, changed profile fields … (never secrets) */
  details: unknown
}

/**
 * A person's own events that belong to no firm (sign-ins and failed attempts,
 * password change and reset, API tokens, profile and licence edits, mailbox
 * reads), newest first, for their profile page.
 */
export async function listPersonAudit(user: SessionUser, limit = 100): Promise<PersonEventDto[]> {
  const rows = await useDb().select().from(auditLog)
    .where(and(isNull(auditLog.firmId), eq(auditLog.userId, user.id)))
    .orderBy(desc(auditLog.at), desc(auditLog.id)).limit(limit)
  return rows.map((a) => ({ id: a.id, at: a.at.toISOString(), action: a.action, details: a.after }))
}
