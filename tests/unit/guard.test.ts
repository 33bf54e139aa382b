// The guard's role rules, without a server: requireUser / requireFirmMember
// run against a scripted database and request. What they must enforce comes
// from DESIGN.md section 2 (who may do what) and section 7 (another firm's
// resource, or one the role may not see, answers 404).
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { CHIEFS, OWNERS, ROLES, SIGNERS, STAFF, AUDITORS } from '../../shared/roles'
import type { Role } from '../../shared/roles'
import type { SQL } from 'drizzle-orm'
import { PgDialect } from 'drizzle-orm/pg-core'
import { sha256Hex } from '../../server/services/passwords'

const session = { uid: undefined as number | undefined, sv: 0, sat: 0 }
vi.mock('#auth', () => ({ getToken: async () => (session.uid ? { uid: session.uid, sv: session.sv, sat: session.sat } : null) }))

/** A stand-in for Drizzle: every query awaits the next scripted result; WHERE clauses are kept as SQL text + params. */
function scriptedDb(results: unknown[][]) {
  const seen: string[] = []
  const wheres: { sql: string; params: unknown[] }[] = []
  const dialect = new PgDialect({ casing: 'snake_case' })
  const chain = (kind: string): unknown => new Proxy(() => undefined, {
    get(_t, prop) {
      if (prop === 'then') {
        const rows = results.shift() ?? []
        seen.push(kind)
        return (resolve: (v: unknown) => void) => resolve(rows)
      }
      if (prop === 'where') return (cond: SQL) => { wheres.push(dialect.sqlToQuery(cond)); return chain(kind) }
      return () => chain(kind)
    },
  })
  return { db: { select: () => chain('select'), update: () => chain('update') }, seen, wheres }
}

interface FakeEvent { context: Record<string, unknown>; headers: Record<string, string>; params: Record<string, string> }
const fakeEvent = (params: Record<string, string> = { firm: 'larchmere' }, headers: Record<string, string> = {}): FakeEvent =>
  ({ context: {}, headers, params })

const firm = { id: 7, slug: 'larchmere', name: 'Larchmere Survey Co.' }
const userRow = { id: 42, email: 'p@tiepoint.test', name: 'P', licenceNumber: null, licenceJurisdiction: null, passwordHash: 'x', sessionVersion: 0 }

async function loadGuard(results: unknown[][]) {
  const { db, seen, wheres } = scriptedDb(results)
  vi.stubGlobal('useDb', () => db)
  vi.stubGlobal('getRequestHeader', (e: FakeEvent, name: string) => e.headers[name.toLowerCase()])
  vi.stubGlobal('getRouterParam', (e: FakeEvent, name: string) => e.params[name])
  const guard = await import('../../server/utils/guard')
  return { guard, seen, wheres }
}

async function statusOf(p: Promise<unknown>): Promise<number> {
  try {
    await p
    return 200
  } catch (error) {
    return (error as { statusCode: number }).statusCode
  }
}

beforeEach(() => { session.uid = undefined; session.sv = 0; session.sat = Math.floor(Date.now() / 1000) - 60 })
afterEach(() => { vi.unstubAllGlobals() })

describe('requireUser', () => {
  it('answers 401 without a session or token', async () => {
    const { guard } = await loadGuard([])
    expect(await statusOf(guard.requireUser(fakeEvent() as never))).toBe(401)
  })

  it('finds the session user', async () => {
    session.uid = 42
    const { guard } = await loadGuard([[userRow]])
    const u = await guard.requireUser(fakeEvent() as never)
    expect(u).toMatchObject({ id: 42, via: 'session' })
  })

  it('ends a session signed with an older session version (password changed or reset)', async () => {
    session.uid = 42
    const { guard } = await loadGuard([[{ ...userRow, sessionVersion: 1 }]])
    expect(await statusOf(guard.requireUser(fakeEvent() as never))).toBe(401)
  })

  it('ends a session 12 hours after sign-in, not before', async () => {
    session.uid = 42
    session.sat = Math.floor(Date.now() / 1000) - 12 * 3600 - 30
    const late = await loadGuard([[userRow]])
    expect(await statusOf(late.guard.requireUser(fakeEvent() as never))).toBe(401)
    session.sat = Math.floor(Date.now() / 1000) - 12 * 3600 + 30
    const inTime = await loadGuard([[userRow]])
    expect(await statusOf(inTime.guard.requireUser(fakeEvent() as never))).toBe(200)
  })

  it('accepts a bearer token by its SHA-256 and records its use', async () => {
    const token = 'tp_abc123'
    const { guard, seen, wheres } = await loadGuard([[{ id: 3, userId: 42 }], [], [userRow]])
    const u = await guard.requireUser(fakeEvent({}, { authorization: `Bearer ${token}` }) as never)
    expect(u).toMatchObject({ id: 42, via: 'token' })
    expect(seen).toEqual(['select', 'update', 'select'])
    // The lookup uses the hash, never the token itself, and skips revoked tokens.
    expect(wheres[0]!.params).toContain(sha256Hex(token))
    expect(wheres[0]!.params).not.toContain(token)
    expect(wheres[0]!.sql).toMatch(/"revoked_at" is null/)
  })

  it('answers 401 for an unknown or revoked bearer token', async () => {
    const { guard } = await loadGuard([[]])
    expect(await statusOf(guard.requireUser(fakeEvent({}, { authorization: 'Bearer tp_revoked' }) as never))).toBe(401)
  })
})

describe('requireFirmMember role rules', () => {
  const groups: [string, readonly Role[]][] = [['any member', []], ['STAFF', STAFF], ['CHIEFS', CHIEFS], ['SIGNERS', SIGNERS], ['OWNERS', OWNERS], ['AUDITORS', AUDITORS]]

  for (const [name, allowed] of groups) {
    for (const role of ROLES) {
      // Expected: allowed → 200; a client outside the group sees nothing of the firm → 404; other staff → 403.
      const expected = allowed.length === 0 || allowed.includes(role) ? 200 : role === 'client' ? 404 : 403
      it(`${role} against ${name} answers ${expected}`, async () => {
        session.uid = 42
        const { guard } = await loadGuard([[userRow], [{ firm, role }]])
        expect(await statusOf(guard.requireFirmMember(fakeEvent() as never, allowed))).toBe(expected)
      })
    }
  }

  it('answers 404 (not 403) for a firm the person does not belong to', async () => {
    session.uid = 42
    const { guard, wheres } = await loadGuard([[userRow], []])
    expect(await statusOf(guard.requireFirmMember(fakeEvent({ firm: 'kestrel' }) as never, []))).toBe(404)
    // The membership lookup is by this person and this firm's slug.
    expect(wheres[1]!.params).toEqual(expect.arrayContaining(['kestrel', 42]))
  })

  it('returns the firm and role on success', async () => {
    session.uid = 42
    const { guard } = await loadGuard([[userRow], [{ firm, role: 'party_chief' }]])
    const ctx = await guard.requireFirmMember(fakeEvent() as never, CHIEFS)
    expect(ctx.firm.slug).toBe('larchmere')
    expect(ctx.role).toBe('party_chief')
    expect(ctx.user.id).toBe(42)
  })
})

describe('role groups match DESIGN.md section 2', () => {
  it('staff are everyone but clients', () => {
    expect([...STAFF].sort()).toEqual(ROLES.filter((r) => r !== 'client').sort())
  })
  it('party chiefs and licensed surveyors may do what chiefs do; field crew and clients may not', () => {
    expect(CHIEFS).toContain('party_chief')
    expect(CHIEFS).toContain('licensed_surveyor')
    expect(CHIEFS).not.toContain('field_crew')
    expect(CHIEFS).not.toContain('client')
  })
  it('only licensed surveyors sign off, only owners manage members', () => {
    expect([...SIGNERS]).toEqual(['licensed_surveyor'])
    expect([...OWNERS]).toEqual(['owner'])
  })
})
