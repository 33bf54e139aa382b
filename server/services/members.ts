// Members of a firm: list, change a role, remove. Only owners change anything
// (the route guards say so); a firm always keeps at least one owner.
import { and, asc, eq } from 'drizzle-orm'
import type { Role } from '../../shared/roles'
import { crewMembers, memberships, projectAccess, users } from '../db/schema'
import type { Tx } from '../db/client'
import { useDb } from '../db/client'
import type { FirmContext } from '../utils/guard'
import { DomainError, notFound } from '../utils/errors'
import { audit } from './audit'

export interface MemberDto {
  id: number
  userId: number
  name: string
  email: string
  role: Role
  licenceNumber: string | null
  licenceJurisdiction: string | null
  /** false until an invited person has set a password */
  active: boolean
  since: string
}

const memberColumns = {
  id: memberships.id,
  userId: users.id,
  name: users.name,
  email: users.email,
  role: memberships.role,
  licenceNumber: users.licenceNumber,
  licenceJurisdiction: users.licenceJurisdiction,
  passwordHash: users.passwordHash,
  createdAt: memberships.createdAt,
}

interface MemberRow {
  id: number
  userId: number
  name: string
  email: string
  role: Role
  licenceNumber: string | null
  licenceJurisdiction: string | null
  passwordHash: string | null
  createdAt: Date
}

function memberDto(r: MemberRow): MemberDto {
  return {
    id: r.id, userId: r.userId, name: r.name, email: r.email, role: r.role,
    licenceNumber: r.licenceNumber, licenceJurisdiction: r.licenceJurisdiction,
    active: r.passwordHash !== null, since: r.createdAt.toISOString(),
  }
}

export async function listMembers(ctx: FirmContext): Promise<MemberDto[]> {
  const rows = await useDb().select(memberColumns).from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.firmId, ctx.firm.id))
    .orderBy(asc(users.name), asc(memberships.id))
  return rows.map(memberDto)
}

/**
 * Locks the firm's owner memberships and the target row so two owners demoting
 * each other at once cannot leave the firm without an owner.
 */
async function lockTarget(tx: Tx, ctx: FirmContext, memberId: number) {
  const owners = await tx.select({ id: memberships.id }).from(memberships)
    .where(and(eq(memberships.firmId, ctx.firm.id), eq(memberships.role, 'owner'))).for('update')
  const [target] = await tx.select(memberColumns).from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(memberships.firmId, ctx.firm.id), eq(memberships.id, memberId))).for('update', { of: memberships })
  if (!target) throw notFound('No such member')
  return { target, ownerCount: owners.length }
}

const lastOwner = () => new DomainError('conflict', 'A firm needs at least one owner: make another member an owner first')

export async function updateMemberRole(ctx: FirmContext, memberId: number, role: Role): Promise<MemberDto> {
  return useDb().transaction(async (tx) => {
    const { target, ownerCount } = await lockTarget(tx, ctx, memberId)
    if (target.role === role) return memberDto(target)
    if (target.role === 'owner' && ownerCount <= 1) throw lastOwner()
    await tx.update(memberships).set({ role })
      .where(and(eq(memberships.firmId, ctx.firm.id), eq(memberships.id, memberId)))
    // Crew assignments mean nothing for a client; keep them for staff roles.
    if (role === 'client') {
      await tx.delete(crewMembers).where(and(eq(crewMembers.firmId, ctx.firm.id), eq(crewMembers.userId, target.userId)))
    }
    await audit(tx, {
      firmId: ctx.firm.id, userId: ctx.user.id, action: 'member.role', entityType: 'membership', entityId: memberId,
      before: { userId: target.userId, email: target.email, role: target.role }, after: { userId: target.userId, email: target.email, role },
    })
    return memberDto({ ...target, role })
  })
}

export async function removeMember(ctx: FirmContext, memberId: number): Promise<void> {
  await useDb().transaction(async (tx) => {
    const { target, ownerCount } = await lockTarget(tx, ctx, memberId)
    if (target.role === 'owner' && ownerCount <= 1) throw lastOwner()
    await tx.delete(crewMembers).where(and(eq(crewMembers.firmId, ctx.firm.id), eq(crewMembers.userId, target.userId)))
    await tx.delete(projectAccess).where(and(eq(projectAccess.firmId, ctx.firm.id), eq(projectAccess.userId, target.userId)))
    await tx.delete(memberships).where(and(eq(memberships.firmId, ctx.firm.id), eq(memberships.id, memberId)))
    await audit(tx, {
      firmId: ctx.firm.id, userId: ctx.user.id, action: 'member.remove', entityType: 'membership', entityId: memberId,
      before: { userId: target.userId, email: target.email, role: target.role },
    })
  })
}
