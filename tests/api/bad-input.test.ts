// Bad input never crashes and never half-saves: malformed JSON answers 400,
// missing, over-long or unknown-enum fields answer 422 naming the field, and
// no row is written.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { sql } from 'drizzle-orm'
import { closeDb, useDb } from '../../server/db/client'
import { as, Client, DEMO } from '../support/http'

afterAll(() => closeDb())

const TABLES = ['projects', 'invitations', 'memberships', 'users', 'api_tokens', 'password_resets', 'audit_log', 'mailbox_messages']

async function counts(): Promise<Record<string, number>> {
  const out: Record<string, number> = {}
  for (const t of TABLES) {
    const r = await useDb().execute(sql.raw(`select count(*)::int as n from ${t}`))
    out[t] = (r.rows[0] as { n: number }).n
  }
  return out
}

type Who = 'owner' | 'chief' | 'anon'
interface Case {
  name: string
  who: Who
  method: 'POST' | 'PATCH'
  path: string
  /** a string is sent as-is (for malformed JSON) */
  body: unknown
  status: 400 | 422
  /** the field the answer must name (422 only) */
  field?: string
}

const long = (n: number) => 'x'.repeat(n)
const F = `/api/firms/${DEMO.firm}`

const CASES: Case[] = [
  // malformed JSON
  { name: 'project create, malformed JSON', who: 'chief', method: 'POST', path: `${F}/projects`, body: '{"name": "Half', status: 400 },
  { name: 'invitation, malformed JSON', who: 'owner', method: 'POST', path: `${F}/invitations`, body: '{email:', status: 400 },
  { name: 'token, malformed JSON', who: 'chief', method: 'POST', path: '/api/me/tokens', body: '[1,', status: 400 },
  { name: 'reset request, malformed JSON', who: 'anon', method: 'POST', path: '/api/password-reset/request', body: '{"email"', status: 400 },
  { name: 'profile, malformed JSON', who: 'chief', method: 'PATCH', path: '/api/me', body: '{"name":}', status: 400 },
  // missing fields
  { name: 'project create without name', who: 'chief', method: 'POST', path: `${F}/projects`, body: { crs: 'local', units: 'm' }, status: 422, field: 'name' },
  { name: 'invitation without role', who: 'owner', method: 'POST', path: `${F}/invitations`, body: { email: 'missing-role@tiepoint.test' }, status: 422, field: 'role' },
  { name: 'invitation without email', who: 'owner', method: 'POST', path: `${F}/invitations`, body: { role: 'client' }, status: 422, field: 'email' },
  { name: 'token without name', who: 'chief', method: 'POST', path: '/api/me/tokens', body: {}, status: 422, field: 'name' },
  { name: 'reset confirm without token', who: 'anon', method: 'POST', path: '/api/password-reset/confirm', body: { password: 'long enough password' }, status: 422, field: 'token' },
  { name: 'password change without next', who: 'chief', method: 'POST', path: '/api/me/password', body: { current: 'tiepoint-demo' }, status: 422, field: 'next' },
  // over-long strings
  { name: 'project name over-long', who: 'chief', method: 'POST', path: `${F}/projects`, body: { name: long(121), crs: 'local', units: 'm' }, status: 422, field: 'name' },
  { name: 'invitation email over-long', who: 'owner', method: 'POST', path: `${F}/invitations`, body: { email: `${long(250)}@tiepoint.test`, role: 'client' }, status: 422, field: 'email' },
  { name: 'token name over-long', who: 'chief', method: 'POST', path: '/api/me/tokens', body: { name: long(81) }, status: 422, field: 'name' },
  { name: 'profile licence number over-long', who: 'chief', method: 'PATCH', path: '/api/me', body: { licenceNumber: long(61) }, status: 422, field: 'licenceNumber' },
  { name: 'profile name over-long', who: 'chief', method: 'PATCH', path: '/api/me', body: { name: long(121) }, status: 422, field: 'name' },
  { name: 'invitation accept password over-long', who: 'anon', method: 'POST', path: '/api/invitations/tpi_x/accept', body: { name: 'A', password: long(73) }, status: 422, field: 'password' },
  // unknown enum values
  { name: 'project units unknown', who: 'chief', method: 'POST', path: `${F}/projects`, body: { name: 'Enum probe', crs: 'local', units: 'furlong' }, status: 422, field: 'units' },
  { name: 'invitation role unknown', who: 'owner', method: 'POST', path: `${F}/invitations`, body: { email: 'enum-probe@tiepoint.test', role: 'admiral' }, status: 422, field: 'role' },
  { name: 'member role unknown', who: 'owner', method: 'PATCH', path: `${F}/members/1`, body: { role: 'superuser' }, status: 422, field: 'role' },
  // wrong types
  { name: 'reset request email not text', who: 'anon', method: 'POST', path: '/api/password-reset/request', body: { email: 42 }, status: 422, field: 'email' },
]

const clients: Partial<Record<Who, Client>> = {}

beforeAll(async () => {
  clients.owner = await as(DEMO.owner)
  clients.chief = await as(DEMO.chief)
  clients.anon = new Client()
})

describe('bad input', () => {
  for (const c of CASES) {
    it(`${c.name}: ${c.status}${c.field ? ` naming ${c.field}` : ''}, nothing written`, async () => {
      const before = await counts()
      const r = await clients[c.who]!.request(c.method, c.path, c.body)
      expect(r.status, JSON.stringify(r.body)).toBe(c.status)
      expect(typeof r.body.message).toBe('string')
      expect(r.body.statusCode).toBe(c.status)
      if (c.field) {
        const named = (r.body.errors ?? []).filter((e: { field?: string; message: string }) => e.field === c.field)
        expect(named.length, JSON.stringify(r.body)).toBeGreaterThan(0)
        expect(named[0].message).toContain(c.field)
      }
      expect(await counts()).toEqual(before)
    })
  }
})
