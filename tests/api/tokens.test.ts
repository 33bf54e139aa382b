// Personal API tokens: shown once, stored as SHA-256, act with the owner's
// roles through `Authorization: Bearer`, stop working once revoked.
import { afterAll, describe, expect, it } from 'vitest'
import { eq } from 'drizzle-orm'
import { closeDb, useDb } from '../../server/db/client'
import { apiTokens } from '../../server/db/schema'
import { sha256Hex } from '../../server/services/passwords'
import { as, Client, DEMO } from '../support/http'

afterAll(() => closeDb())

describe('personal API tokens', () => {
  it('a bearer token works with its owner’s roles and stops working once revoked', async () => {
    const chief = await as(DEMO.chief)
    const created = await chief.post('/api/me/tokens', { name: 'Office script' })
    expect(created.status).toBe(201)
    const token: string = created.body.token
    expect(token).toMatch(/^tp_/)

    const [row] = await useDb().select().from(apiTokens).where(eq(apiTokens.id, created.body.id))
    expect(row!.tokenHash).toBe(sha256Hex(token))
    expect(token.startsWith(row!.prefix)).toBe(true)

    const list = await chief.get('/api/me/tokens')
    const listed = list.body.find((t: { id: number }) => t.id === created.body.id)
    expect(listed).toMatchObject({ name: 'Office script', prefix: row!.prefix, revokedAt: null })
    expect(JSON.stringify(list.body)).not.toContain(token)
    expect(JSON.stringify(list.body)).not.toContain(row!.tokenHash)

    const bot = new Client(token)
    const me = await bot.get('/api/me')
    expect(me.status).toBe(200)
    expect(me.body.user.email).toBe(DEMO.chief)
    expect((await bot.get(`/api/firms/${DEMO.firm}/projects`)).status).toBe(200)
    // Acts with the chief's role: may create projects, may not manage members.
    const project = await bot.post(`/api/firms/${DEMO.firm}/projects`, { name: `Token project ${Date.now()}`, crs: 'local', units: 'm' })
    expect(project.status).toBe(201)
    expect((await bot.post(`/api/firms/${DEMO.firm}/invitations`, { email: 'nobody@tiepoint.test', role: 'owner' })).status).toBe(403)
    expect((await bot.get(`/api/firms/${DEMO.otherFirm}/projects`)).status).toBe(404)
    // A token cannot mint more tokens or change the password.
    expect((await bot.post('/api/me/tokens', { name: 'child' })).status).toBe(403)
    expect((await bot.post('/api/me/password', { current: 'tiepoint-demo', next: 'whatever password' })).status).toBe(403)
    const [used] = await useDb().select().from(apiTokens).where(eq(apiTokens.id, created.body.id))
    expect(used!.lastUsedAt).not.toBeNull()

    const revoked = await chief.delete(`/api/me/tokens/${created.body.id}`)
    expect(revoked.status).toBe(200)
    expect(revoked.body.revokedAt).not.toBeNull()
    const after = await bot.get('/api/me')
    expect(after.status).toBe(401)
    expect(after.body.message).toMatch(/revoked|not valid/)
    expect((await bot.get(`/api/firms/${DEMO.firm}/projects`)).status).toBe(401)
  })

  it('someone else’s token is not found and keeps working', async () => {
    const chief = await as(DEMO.chief)
    const created = await chief.post('/api/me/tokens', { name: 'Not yours' })
    const crew = await as(DEMO.crew)
    expect((await crew.delete(`/api/me/tokens/${created.body.id}`)).status).toBe(404)
    expect((await crew.get('/api/me/tokens')).body.some((t: { id: number }) => t.id === created.body.id)).toBe(false)
    expect((await new Client(created.body.token).get('/api/me')).status).toBe(200)
    await chief.delete(`/api/me/tokens/${created.body.id}`)
  })

  it('a made-up bearer token answers 401', async () => {
    expect((await new Client('tp_not-a-real-token').get('/api/me')).status).toBe(401)
  })

  it('without a session the token routes answer 401', async () => {
    const anon = new Client()
    expect((await anon.get('/api/me/tokens')).status).toBe(401)
    expect((await anon.post('/api/me/tokens', { name: 'x' })).status).toBe(401)
    expect((await anon.delete('/api/me/tokens/1')).status).toBe(401)
  })
})
