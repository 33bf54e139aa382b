// Client access to a project's releases. Granting access to an address with no
// account creates the person without a password, makes them a client of the
// firm and mails a one-time set-password link (the password-reset token
// mechanism, valid for the invitation period); an existing person is made a
// client of the firm if they are not in it yet and told by e-mail.
import { and, asc, eq } from 'drizzle-orm'
import type { AccessGrant } from '../../shared/schemas/access'
import { memberships, passwordResets, projectAccess, users } from '../db/schema'
import type { Project } from '../db/schema'
import { useDb } from '../db/client'
import type { FirmContext } from '../utils/guard'
import { DomainError } from '../utils/errors'
import { audit } from './audit'
import { INVITATION_DAYS } from './invitations'
import { publicUrl, sendMail } from './mail'
import { newToken } from './passwords'


export interface AccessDto { userId: number; email: string; name: string; grantedAt: string; accountReady: boolean }

export async function listAccess(ctx: FirmContext, project: Project): Promise<AccessDto[]> {
  const rows = await useDb().select({ a: projectAccess, u: users }).from(projectAccess)
    .innerJoin(users, eq(users.id, projectAccess.userId))
    .where(and(eq(projectAccess.firmId, ctx.firm.id), eq(projectAccess.projectId, project.id)))
    .orderBy(asc(users.email))
  return rows.map(({ a, u }) => ({ userId: u.id, email: u.email, name: u.name, grantedAt: a.createdAt.toISOString(), accountReady: !!u.passwordHash }))
}

export async function grantAccess(ctx: FirmContext, project: Project, body: AccessGrant): Promise<{ access: AccessDto; created: boolean; newAccount: boolean }> {
  const db = useDb()
  const out = await db.transaction(async (tx) => {
    let [user] = await tx.select().from(users).where(eq(users.email, body.email)).limit(1)
    let newAccount = false
    let setPasswordToken: string | null = null
    if (!user) {
      ;[user] = await tx.insert(users).values({ email: body.email, name: body.name ?? body.email.split('@')[0]!, passwordHash: null }).returning()
      newAccount = true
    }
    if (!user!.passwordHash) {
      const { token, hash } = newToken('tpr')
      await tx.insert(passwordResets).values({ userId: user!.id, tokenHash: hash, expiresAt: new Date(Date.now() + INVITATION_DAYS * 24 * 3600 * 1000) })
      setPasswordToken = token
    }
    const [membership] = await tx.select().from(memberships)
      .where(and(eq(memberships.firmId, ctx.firm.id), eq(memberships.userId, user!.id))).limit(1)
    if (membership && membership.role !== 'client') {
      throw new DomainError('conflict', `${body.email} works for ${ctx.firm.name} (role ${membership.role.replace('_', ' ')}) and sees the project already; client access is for people outside the firm`, [{ field: 'email', message: 'email: is a staff member of this firm' }])
    }
    if (!membership) await tx.insert(memberships).values({ firmId: ctx.firm.id, userId: user!.id, role: 'client' })
    const [row] = await tx.insert(projectAccess).values({ firmId: ctx.firm.id, projectId: project.id, userId: user!.id, grantedBy: ctx.user.id })
      .onConflictDoNothing().returning()
    if (row) {
      await audit(tx, { firmId: ctx.firm.id, userId: ctx.user.id, action: 'access.grant', entityType: 'project_access', entityId: row.id, projectId: project.id, after: { email: user!.email, newAccount } })
    }
    const [access] = await tx.select().from(projectAccess)
      .where(and(eq(projectAccess.firmId, ctx.firm.id), eq(projectAccess.projectId, project.id), eq(projectAccess.userId, user!.id))).limit(1)
    return { user: user!, access: access!, created: !!row, newAccount, setPasswordToken }
  })
  if (out.created) {
    try {
      await sendMail({
        to: out.user.email,
        subject: `${ctx.firm.name} shared "${project.name}" with you on Tiepoint`,
        paragraphs: [
          `${ctx.user.name} of ${ctx.firm.name} gave you access to the released control coordinates of "${project.name}".`,
          out.setPasswordToken
            ? `Choose a password to sign in. The link works once and expires in ${INVITATION_DAYS} days.`
            : 'Sign in with your usual Tiepoint account to see the releases and download the files.',
        ],
        link: out.setPasswordToken
          ? { url: publicUrl(`/reset/${out.setPasswordToken}`), label: 'Choose a password' }
          : { url: publicUrl('/client'), label: 'Open your releases' },
        firmName: ctx.firm.name,
      })
    } catch (error) {
      console.error('[tiepoint] access e-mail failed:', (error as Error).message)
    }
  }
  return {
    access: { userId: out.user.id, email: out.user.email, name: out.user.name, grantedAt: out.access.createdAt.toISOString(), accountReady: !!out.user.passwordHash },
    created: out.created,
    newAccount: out.newAccount,
  }
}
