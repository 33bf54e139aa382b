// A person's own profile: name, licence details (needed to sign off), password.
import { eq } from 'drizzle-orm'
import type { PasswordChange, ProfileUpdate } from '../../shared/schemas/profile'
import { users } from '../db/schema'
import { useDb } from '../db/client'
import { ApiError } from '../utils/api'
import type { SessionUser } from '../utils/guard'
import { hashPassword } from './passwords'
import { checkCredentials, ThrottledError } from './signin'

export interface ProfileDto {
  id: number
  email: string
  name: string
  licenceNumber: string | null
  licenceJurisdiction: string | null
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
  let ok
  try {
    ok = await checkCredentials(user.email, body.current, ip)
  } catch (error) {
    if (error instanceof ThrottledError) throw new ApiError(429, error.message)
    throw error
  }
  if (!ok || ok.id !== user.id) {
    throw new ApiError(422, 'Your current password is not right', [{ field: 'current', message: 'current: is not your current password' }])
  }
  await useDb().update(users).set({ passwordHash: await hashPassword(body.next) }).where(eq(users.id, user.id))
}
