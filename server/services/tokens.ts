// Personal API tokens: created on the profile page, shown once, stored only as
// SHA-256, act with their owner's roles (server/utils/guard.ts), revoked by
// setting revokedAt (kept so a person can see when a token was last used).
import { and, desc, eq, isNull } from 'drizzle-orm'
import { apiTokens } from '../db/schema'
import type { User } from '../db/schema'
import { useDb } from '../db/client'
import { DomainError, notFound } from '../utils/errors'
import { auditPerson } from './audit'
import { newToken } from './passwords'

export const MAX_ACTIVE_TOKENS = 20

export interface TokenDto {
  id: number
  name: string
  prefix: string
  createdAt: string
  lastUsedAt: string | null
  revokedAt: string | null
}

type TokenRow = typeof apiTokens.$inferSelect

const tokenDto = (t: TokenRow): TokenDto => ({
  id: t.id, name: t.name, prefix: t.prefix, createdAt: t.createdAt.toISOString(),
  lastUsedAt: t.lastUsedAt?.toISOString() ?? null, revokedAt: t.revokedAt?.toISOString() ?? null,
})

export async function listTokens(userId: User['id']): Promise<TokenDto[]> {
  const rows = await useDb().select().from(apiTokens).where(eq(apiTokens.userId, userId)).orderBy(desc(apiTokens.createdAt), desc(apiTokens.id))
  return rows.map(tokenDto)
}

/** Returns the token itself once; afterwards only its prefix is known. */
export async function createToken(userId: User['id'], name: string): Promise<TokenDto & { token: string }> {
  return useDb().transaction(async (tx) => {
    const active = await tx.select({ id: apiTokens.id }).from(apiTokens)
      .where(and(eq(apiTokens.userId, userId), isNull(apiTokens.revokedAt))).for('update')
    if (active.length >= MAX_ACTIVE_TOKENS) throw new DomainError('conflict', `You already have ${MAX_ACTIVE_TOKENS} active tokens; revoke one you no longer use first`)
    const { token, hash, shown } = newToken('tp')
    const [row] = await tx.insert(apiTokens).values({ userId, name, tokenHash: hash, prefix: shown }).returning()
    await auditPerson(userId, 'token.create', { tokenId: row!.id, name, prefix: shown }, { db: tx })
    return { ...tokenDto(row!), token }
  })
}

export async function revokeToken(userId: User['id'], tokenId: number): Promise<TokenDto> {
  const db = useDb()
  const [row] = await db.update(apiTokens).set({ revokedAt: new Date() })
    .where(and(eq(apiTokens.userId, userId), eq(apiTokens.id, tokenId), isNull(apiTokens.revokedAt))).returning()
  if (row) {
    await auditPerson(userId, 'token.revoke', { tokenId: row.id, name: row.name, prefix: row.prefix })
    return tokenDto(row)
  }
  // Revoking twice is harmless; someone else's token is simply not found.
  const [existing] = await db.select().from(apiTokens).where(and(eq(apiTokens.userId, userId), eq(apiTokens.id, tokenId))).limit(1)
  if (!existing) throw notFound('No such token')
  return tokenDto(existing)
}
