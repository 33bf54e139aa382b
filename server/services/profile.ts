// A person's own profile: name, licence details (needed to sign off), password.
import { eq, sql } from 'drizzle-orm'
import type { Role } from '../../shared/roles'
import type { PasswordChange, ProfileUpdate } from '../../shared/schemas/profile'
import { firms, memberships, users } from '../db/schema'
import { useDb } from '../db/client'
import { invalid } from '../utils/errors'
import type { SessionUser } from '../utils/guard'
import { auditPerson } from './audit'
import { hashPassword } from './passwords'
import { devMailboxEnabled } from './mail'
import { checkCredentials } from './signin'

export interface ProfileDto {
  id: number
  email: string
  name: string
  licenceNumber: string | null
  licenceJurisdiction: string | null
}

/** The signed-in person, their firms and their role in each. */
export async function getMe(user: SessionUser): Promise<{ user: ProfileDto; firms: { slug: string; name: string; role: Role }[]; devMailbox: boolean }> {
  const rows = await useDb().select({ slug: firms.slug, name: firms.name, role: memberships.role })
    .from(memberships).innerJoin(firms, eq(firms.id, memberships.firmId))
    .where(eq(memberships.userId, user.id)).orderBy(firms.name)
  return {
    user: { id: user.id, email: user.email, name: user.name, licenceNumber: user.licenceNumber, licenceJurisdiction: user.licenceJurisdiction },
    firms: rows,
    devMailbox: devMailboxEnabled(),
  }
}

export async function updateProfile(user: SessionUser, body: ProfileUpdate): Promise<ProfileDto> {
  const patch: Partial<typeof users.$inferInsert> = {}
  if (body.name !== undefined) patch.name = body.name
  if (body.licenceNumber !== undefined) patch.licenceNumber = body.licenceNumber
  if (body.licenceJurisdiction !== undefined) patch.licenceJurisdiction = body.licenceJurisdiction
  return useDb().transaction(async (tx) => {
    const [was] = await tx.select().from(users).where(eq(users.id, user.id)).for('update')
    const [u] = Object.keys(patch).length
      ? await tx.update(users).set(patch).where(eq(users.id, user.id)).returning()
      : [was]
    const dto = { id: u!.id, email: u!.email, name: u!.name, licenceNumber: u!.licenceNumber, licenceJurisdiction: u!.licenceJurisdiction }
    if (Object.keys(patch).length) {
      const pick = (x: typeof was) => ({ name: x!.name, licenceNumber: x!.licenceNumber, licenceJurisdiction: x!.licenceJurisdiction })
      await auditPerson(user.id, 'profile.update', pick(u), { db: tx, before: pick(was) })
    }
    return dto
  })
}

/**
 * Changes the password after checking the current one (throttled like a
 * sign-in). Raises the session version, which ends every other session of
 * the person; returns the new version so the caller can keep this session.
 */
export async function changePassword(user: SessionUser, body: PasswordChange, ip: string): Promise<number> {
  const ok = await checkCredentials(user.email, body.current, ip, 'password.change')
  if (!ok || ok.id !== user.id) {
    throw invalid('Your current password is not right', [{ field: 'current', message: 'current: is not your current password' }])
  }
  const passwordHash = await hashPassword(body.next)
  return useDb().transaction(async (tx) => {
    const [u] = await tx.update(users).set({ passwordHash, sessionVersion: sql`${users.sessionVersion} + 1` })
      .where(eq(users.id, user.id)).returning({ sessionVersion: users.sessionVersion })
    await auditPerson(user.id, 'password.change', { ip, otherSessionsEnded: true }, { db: tx })
    return u!.sessionVersion
  })
}
