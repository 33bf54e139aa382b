// A person's own profile: name, licence details (needed to sign off), password.
import { eq } from 'drizzle-orm'
import type { Role } from '../../shared/roles'
import type { PasswordChange, ProfileUpdate } from '../../shared/schemas/profile'
import { firms, memberships, users } from '../db/schema'
import { useDb } from '../db/client'
import { DomainError } from '../utils/errors'
import type { SessionUser } from '../utils/guard'
import { hashPassword } from './passwords'
import { checkCredentials } from './signin'

export interface ProfileDto {
  id: number
  email: string
  name: string
  licenceNumber: string | null
  licenceJurisdiction: string | null
}

/** The signed-in person, their firms and their role in each. */
export async function getMe(user: SessionUser): Promise<{ user: ProfileDto; firms: { slug: string; name: string; role: Role }[] }> {
  const rows = await useDb().select({ slug: firms.slug, name: firms.name, role: memberships.role })
    .from(memberships).innerJoin(firms, eq(firms.id, memberships.firmId))
    .where(eq(memberships.userId, user.id)).orderBy(firms.name)
  return {
    user: { id: user.id, email: user.email, name: user.name, licenceNumber: user.licenceNumber, licenceJurisdiction: user.licenceJurisdiction },
    firms: rows,
  }
}

export async function updateProfile(user: SessionUser, body: ProfileUpdate): Promise<ProfileDto> {
  const patch: Partial<typeof users.$inferInsert> = {}
  if (body.name !== undefined) patch.name = body.name
  if (body.licenceNumber !== undefined) patch.licenceNumber = body.licenceNumber
  if (body.licenceJurisdiction !== undefined) patch.licenceJurisdiction = body.licenceJurisdiction
  const db = useDb()
  const [u] = Object.keys(patch).length
    ? await db.update(users).set(patch).where(eq(users.id, user.id)).returning()
    : await db.select().from(users).where(eq(users.id, user.id))
  return { id: u!.id, email: u!.email, name: u!.name, licenceNumber: u!.licenceNumber, licenceJurisdiction: u!.licenceJurisdiction }
}

export async function changePassword(user: SessionUser, body: PasswordChange, ip: string): Promise<void> {
  // The current password is checked like a sign-in, so it is throttled like one.
  const ok = await checkCredentials(user.email, body.current, ip)
  if (!ok || ok.id !== user.id) {
    throw new DomainError('invalid', 'Your current password is not right', [{ field: 'current', message: 'current: is not your current password' }])
  }
  await useDb().update(users).set({ passwordHash: await hashPassword(body.next) }).where(eq(users.id, user.id))
}
