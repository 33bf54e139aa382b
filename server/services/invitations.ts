// Invitations: an owner invites an e-mail address with a role; the e-mail
// carries a one-time link (only its SHA-256 is stored) valid for 7 days.
// Accepting either creates the person (name + password) or, for someone who
// already has a Tiepoint account, adds the membership once they confirm their
// password.
import { and, desc, eq, gt, isNull } from 'drizzle-orm'
import type { Role } from '../../shared/roles'
import { ROLE_LABELS } from '../../shared/roles'
import type { InvitationAccept, InvitationCreate } from '../../shared/schemas/members'
import { firms, invitations, memberships, users } from '../db/schema'
import { useDb } from '../db/client'
import type { FirmContext } from '../utils/guard'
import { DomainError, notFound } from '../utils/errors'
import { audit } from './audit'
import { publicUrl, sendMail } from './mail'
import { hashPassword, newToken, sha256Hex } from './passwords'
import { checkCredentials } from './signin'

export const INVITATION_DAYS = 7

export interface InvitationDto {
  id: number
  email: string
  role: Role
  invitedBy: string | null
  expiresAt: string
  expired: boolean
  createdAt: string
}

export interface InvitationPublicDto {
  firmName: string
  email: string
  role: Role
  roleLabel: string
  /** true when the address already has a Tiepoint password: the page asks to confirm it instead of a name */
  existingUser: boolean
  expiresAt: string
}

export async function listInvitations(ctx: FirmContext): Promise<InvitationDto[]> {
  const rows = await useDb().select({ inv: invitations, invitedBy: users.name }).from(invitations)
    .leftJoin(users, eq(users.id, invitations.invitedBy))
    .where(and(eq(invitations.firmId, ctx.firm.id), isNull(invitations.acceptedAt)))
    .orderBy(desc(invitations.createdAt))
  const now = Date.now()
  return rows.map(({ inv, invitedBy }) => ({
    id: inv.id, email: inv.email, role: inv.role, invitedBy,
    expiresAt: inv.expiresAt.toISOString(), expired: inv.expiresAt.getTime() <= now, createdAt: inv.createdAt.toISOString(),
  }))
}

/**
 * Creates the invitation and e-mails its link. The answer carries the link
 * too, this once, so the inviter can pass it on when no mail server is set
 * up; afterwards only its hash exists.
 */
export async function createInvitation(ctx: FirmContext, body: InvitationCreate): Promise<InvitationDto & { link: string }> {
  const db = useDb()
  const [already] = await db.select({ id: memberships.id }).from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(memberships.firmId, ctx.firm.id), eq(users.email, body.email))).limit(1)
  if (already) throw new DomainError('conflict', `${body.email} is already a member of ${ctx.firm.name}`, [{ field: 'email', message: 'email: is already a member of this firm' }])

  const { token, hash } = newToken('tpi')
  const expiresAt = new Date(Date.now() + INVITATION_DAYS * 24 * 3600 * 1000)
  // The e-mail is sent inside the transaction: if it cannot be sent, no invitation is left behind.
  return db.transaction(async (tx) => {
    // A new invitation replaces any open one for the same address, so only the newest link works.
    await tx.delete(invitations).where(and(eq(invitations.firmId, ctx.firm.id), eq(invitations.email, body.email), isNull(invitations.acceptedAt)))
    const [inv] = await tx.insert(invitations).values({
      firmId: ctx.firm.id, email: body.email, role: body.role, tokenHash: hash, invitedBy: ctx.user.id, expiresAt,
    }).returning()
    await audit(tx, {
      firmId: ctx.firm.id, userId: ctx.user.id, action: 'invitation.create', entityType: 'invitation', entityId: inv!.id,
      after: { email: body.email, role: body.role, expiresAt: expiresAt.toISOString() },
    })
    try {
      await sendMail({
        to: body.email,
        subject: `${ctx.user.name} invited you to ${ctx.firm.name} on Tiepoint`,
        paragraphs: [
          `${ctx.user.name} invited you to join ${ctx.firm.name} on Tiepoint as ${ROLE_LABELS[body.role].toLowerCase()}.`,
          `The link below works once and expires in ${INVITATION_DAYS} days. If you did not expect this invitation, you can ignore this message.`,
        ],
        link: { url: publicUrl(`/invite/${token}`), label: 'Accept the invitation' },
        firmName: ctx.firm.name,
      })
    } catch (error) {
      console.error('[tiepoint] invitation e-mail failed:', (error as Error).message)
      throw new DomainError('upstream', 'The invitation e-mail could not be sent; nothing was saved. Please try again later.')
    }
    return {
      id: inv!.id, email: inv!.email, role: inv!.role, invitedBy: ctx.user.name,
      expiresAt: expiresAt.toISOString(), expired: false, createdAt: inv!.createdAt.toISOString(),
      link: publicUrl(`/invite/${token}`),
    }
  })
}

export async function revokeInvitation(ctx: FirmContext, invitationId: number): Promise<void> {
  await useDb().transaction(async (tx) => {
    const [inv] = await tx.delete(invitations)
      .where(and(eq(invitations.firmId, ctx.firm.id), eq(invitations.id, invitationId), isNull(invitations.acceptedAt))).returning()
    if (!inv) throw notFound('No such open invitation')
    await audit(tx, {
      firmId: ctx.firm.id, userId: ctx.user.id, action: 'invitation.revoke', entityType: 'invitation', entityId: inv.id,
      before: { email: inv.email, role: inv.role },
    })
  })
}

const invalidLink = () => new DomainError('not_found', 'This invitation link is not valid: it may have expired, been used already or been withdrawn. Ask the firm for a new one.')

async function openInvitation(token: string) {
  const db = useDb()
  const [row] = await db.select({ inv: invitations, firmName: firms.name }).from(invitations)
    .innerJoin(firms, eq(firms.id, invitations.firmId))
    .where(and(eq(invitations.tokenHash, sha256Hex(token)), isNull(invitations.acceptedAt), gt(invitations.expiresAt, new Date()))).limit(1)
  if (!row) throw invalidLink()
  const [user] = await db.select().from(users).where(eq(users.email, row.inv.email)).limit(1)
  return { ...row, user }
}

export async function readInvitation(token: string): Promise<InvitationPublicDto> {
  const { inv, firmName, user } = await openInvitation(token)
  return {
    firmName, email: inv.email, role: inv.role, roleLabel: ROLE_LABELS[inv.role],
    existingUser: !!user?.passwordHash, expiresAt: inv.expiresAt.toISOString(),
  }
}

export async function acceptInvitation(token: string, body: InvitationAccept, ip: string): Promise<{ email: string; firmName: string; firmSlug: string }> {
  const { inv, user } = await openInvitation(token)
  const existing = !!user?.passwordHash
  if (existing) {
    // Goes through the sign-in check so guessing a password here is throttled like sign-in.
    const ok = await checkCredentials(inv.email, body.password, ip, 'invitation.accept')
    if (!ok) throw new DomainError('invalid', 'That is not the password of your Tiepoint account', [{ field: 'password', message: 'password: does not match your Tiepoint password' }])
  } else if (!body.name) {
    throw new DomainError('invalid', 'Some fields are not valid', [{ field: 'name', message: 'name: is required' }])
  }
  const passwordHash = existing ? null : await hashPassword(body.password)

  return useDb().transaction(async (tx) => {
    // Claiming the invitation with one conditional UPDATE makes the link one-time even under concurrent use.
    const [claimed] = await tx.update(invitations).set({ acceptedAt: new Date() })
      .where(and(eq(invitations.id, inv.id), isNull(invitations.acceptedAt), gt(invitations.expiresAt, new Date()))).returning()
    if (!claimed) throw invalidLink()
    let userId: number
    if (user) {
      userId = user.id
      if (!existing) await tx.update(users).set({ name: body.name!, passwordHash }).where(eq(users.id, user.id))
    } else {
      const [created] = await tx.insert(users).values({ email: inv.email, name: body.name!, passwordHash }).returning({ id: users.id })
      userId = created!.id
    }
    const [membership] = await tx.insert(memberships).values({ firmId: inv.firmId, userId, role: inv.role })
      .onConflictDoNothing().returning({ id: memberships.id })
    await audit(tx, {
      firmId: inv.firmId, userId, action: 'invitation.accept', entityType: 'invitation', entityId: inv.id,
      after: { email: inv.email, role: inv.role, membershipId: membership?.id ?? null, newAccount: !existing },
    })
    const [firm] = await tx.select({ slug: firms.slug, name: firms.name }).from(firms).where(eq(firms.id, inv.firmId))
    return { email: inv.email, firmName: firm!.name, firmSlug: firm!.slug }
  })
}
