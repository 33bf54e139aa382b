// Releases through the API: publishing a signed list, the files and their
// SHA-256, client access (existing and new accounts), what a client may see,
// download logging, tenancy, the release and run-failed e-mails, and the
// audit log page's API.
import { createHash } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { and, eq } from 'drizzle-orm'
import Papa from 'papaparse'
import { extractText, getDocumentProxy } from 'unpdf'
import { closeDb, useDb } from '../../server/db/client'
import { adjustments, auditLog, downloads, memberships, passwordResets, projectAccess, users } from '../../server/db/schema'
import { readLandXml } from '../../server/engine/io/landxml'
import { notifyRunFailed } from '../../server/services/notifications'
import { smtpPort } from '../support/env'
import { as, DEMO, type Client } from '../support/http'
import { finishedRun, mailsSince } from './signoffs-fixture'

let chief: Client
let surveyor: Client
let client: Client
let fx: Awaited<ReturnType<typeof finishedRun>>
let signoff: any
let release: any
const started = new Date()
const sha = (b: Buffer) => createHash('sha256').update(b).digest('hex')

beforeAll(async () => {
  chief = await as(DEMO.chief)
  surveyor = await as(DEMO.surveyor)
  client = await as(DEMO.client)
  fx = await finishedRun(chief, 'Release suite')
  const s = await surveyor.post(`${fx.base}/adjustments/${fx.runNumber}/signoffs`, { statement: 'Certified for the footbridge set-out (test).', password: 'tiepoint-demo', acknowledgeFailedTests: true })
  if (s.status !== 201) throw new Error(`sign-off: ${s.status} ${JSON.stringify(s.body)}`)
  signoff = s.body
})
afterAll(async () => { await closeDb() })

async function download(c: Client, path: string): Promise<{ status: number; bytes: Buffer; headers: Headers }> {
  const res = await c.raw(path)
  return { status: res.status, bytes: Buffer.from(await res.arrayBuffer()), headers: res.headers }
}

describe('client access', () => {
  it('a party chief grants an existing client account: 201, listed, and a mail with the client page link', async () => {
    const r = await chief.post(`${fx.base}/access`, { email: DEMO.client })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
    expect(r.body).toMatchObject({ created: true, newAccount: false })
    const list = await chief.get(`${fx.base}/access`)
    expect(list.body.map((a: any) => a.email)).toContain(DEMO.client)
    const mails = (await mailsSince(started, 'shared')).filter((m) => m.to === DEMO.client && m.subject.includes('Release suite'))
    expect(mails[0]!.text).toContain('/client')
    expect((await chief.post(`${fx.base}/access`, { email: DEMO.client })).status).toBe(200)
  })

  it('an address without an account becomes a client with no password and gets a one-time set-password link', async () => {
    const email = `new-client-${Date.now()}@example.test`
    const r = await chief.post(`${fx.base}/access`, { email })
    expect(r.status).toBe(201)
    expect(r.body.newAccount).toBe(true)
    const [u] = await useDb().select().from(users).where(eq(users.email, email))
    expect(u!.passwordHash).toBeNull()
    const [m] = await useDb().select().from(memberships).where(eq(memberships.userId, u!.id))
    expect(m!.role).toBe('client')
    expect(await useDb().select().from(passwordResets).where(eq(passwordResets.userId, u!.id))).toHaveLength(1)
    const [mail] = (await mailsSince(started, 'shared')).filter((x) => x.to === email)
    expect(mail!.text).toMatch(/\/reset\/tpr_[\w-]+/)
  })

  it('refuses a staff member (409), a bad address (422), and is closed to field crew (403) and clients (404)', async () => {
    expect((await chief.post(`${fx.base}/access`, { email: DEMO.crew })).status).toBe(409)
    const bad = await chief.post(`${fx.base}/access`, { email: 'not-an-address' })
    expect(bad.status).toBe(422)
    expect(bad.body.errors[0].field).toBe('email')
    expect((await (await as(DEMO.crew)).get(`${fx.base}/access`)).status).toBe(403)
    expect((await client.get(`${fx.base}/access`)).status).toBe(404)
  })
})

describe('publishing a release', () => {
  it('answers 201 with the files and their SHA-256, made from the signed data (no GeoJSON for a local plane)', async () => {
    const since = new Date()
    const r = await chief.post(`${fx.base}/releases`, { signoffId: signoff.id })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
    release = r.body
    expect(release.files.map((f: any) => f.format)).toEqual(['csv', 'landxml', 'pdf'])
    expect(release.geojsonMissingReason).toMatch(/local plane/)
    for (const f of release.files) expect(f.sha256).toMatch(/^[0-9a-f]{64}$/)
    // the client with access is told, with a link and the caution
    const mails = (await mailsSince(since, 'New release of')).filter((m) => m.to === DEMO.client && m.text.includes(`release ${release.id}`))
    expect(mails).toHaveLength(1)
    expect(mails[0]!.text).toContain(`/client?firm=${DEMO.firm}&project=${fx.projectId}`)
    expect(mails[0]!.text).toContain('local regulations and licensed practice')
  })

  it('field crew may not publish (403); a client gets 404; an unknown sign-off 422', async () => {
    expect((await (await as(DEMO.crew)).post(`${fx.base}/releases`, { signoffId: signoff.id })).status).toBe(403)
    expect((await client.post(`${fx.base}/releases`, { signoffId: signoff.id })).status).toBe(404)
    expect((await chief.post(`${fx.base}/releases`, { signoffId: 999999 })).status).toBe(422)
  })

  it('the client lists it and downloads every file; bytes match the published SHA-256 and the signed coordinates', async () => {
    const list = await client.get(`${fx.base}/releases`)
    expect(list.status).toBe(200)
    const mine = list.body.find((x: any) => x.id === release.id)
    expect(mine.signoffSha256).toBe(signoff.sha256)
    for (const f of mine.files) {
      const d = await download(client, f.url)
      expect(d.status).toBe(200)
      expect(sha(d.bytes)).toBe(f.sha256)
      expect(d.headers.get('content-disposition')).toContain(f.fileName)
      if (f.format === 'csv') {
        const rows = Papa.parse<Record<string, string>>(d.bytes.toString('utf8'), { header: true, comments: '#', skipEmptyLines: true }).data
        expect(rows.map((x) => x.name)).toEqual(signoff.stations.map((s: any) => s.name))
        // four decimals in the file, five in the signed list
        rows.forEach((x, i) => expect(Math.abs(Number(x.east_m) - signoff.stations[i].east)).toBeLessThanOrEqual(0.00005 + 1e-9))
      }
      if (f.format === 'landxml') {
        const read = readLandXml(d.bytes.toString('utf8'))
        expect(read.ok).toBe(true)
        if (read.ok) expect(read.controls.map((c) => c.station)).toEqual(signoff.stations.map((s: any) => s.name))
      }
      if (f.format === 'pdf') {
        const { text } = await extractText(await getDocumentProxy(new Uint8Array(d.bytes)), { mergePages: true })
        for (const s of signoff.stations) expect(text).toContain(s.north.toFixed(4))
        expect(text).toContain(signoff.sha256)
      }
    }
  })

  it('logs every download in downloads and the audit log', async () => {
    const rows = await useDb().select().from(downloads).where(eq(downloads.releaseId, release.id))
    const [me] = await useDb().select().from(users).where(eq(users.email, DEMO.client))
    expect(rows.filter((r) => r.userId === me!.id).map((r) => r.format).sort()).toEqual(['csv', 'landxml', 'pdf'])
    const before = rows.length
    await download(chief, release.files[0].url)
    expect(await useDb().select().from(downloads).where(eq(downloads.releaseId, release.id))).toHaveLength(before + 1)
  })

  it('an unknown format or release is 404, and GeoJSON of a local project is 404', async () => {
    expect((await download(client, `${fx.base}/releases/${release.id}/files/docx`)).status).toBe(404)
    expect((await download(client, `${fx.base}/releases/${release.id}/files/geojson`)).status).toBe(404)
    expect((await download(client, `${fx.base}/releases/999999/files/csv`)).status).toBe(404)
  })
})

describe('tenancy', () => {
  it("another firm's owner gets 404 for the release list and files, by either firm's path", async () => {
    const other = await as(DEMO.other)
    expect((await other.get(`${fx.base}/releases`)).status).toBe(404)
    expect((await download(other, release.files[0].url)).status).toBe(404)
    expect((await download(other, `/api/firms/${DEMO.otherFirm}/projects/${fx.projectId}/releases/${release.id}/files/csv`)).status).toBe(404)
  })

  it('a client without access to a project sees neither it nor its releases (404) and gets no download logged', async () => {
    const [me] = await useDb().select().from(users).where(eq(users.email, DEMO.client))
    await useDb().delete(projectAccess).where(and(eq(projectAccess.projectId, fx.projectId), eq(projectAccess.userId, me!.id)))
    const before = (await useDb().select().from(downloads).where(eq(downloads.releaseId, release.id))).length
    expect((await client.get(`${fx.base}/releases`)).status).toBe(404)
    expect((await download(client, release.files[0].url)).status).toBe(404)
    expect(await useDb().select().from(downloads).where(eq(downloads.releaseId, release.id))).toHaveLength(before)
    expect((await client.get(`${fx.base}/signoffs/preview?run=${fx.runNumber}`)).status).toBe(404)
    expect((await client.get(`/api/firms/${DEMO.firm}/audit`)).status).toBe(404)
  })
})

describe('audit log', () => {
  it('owners and licensed surveyors read every sign-off, release and download; party chiefs get 403', async () => {
    const owner = await as(DEMO.owner)
    const r = await owner.get(`/api/firms/${DEMO.firm}/audit?limit=1000`)
    expect(r.status).toBe(200)
    const actions = r.body.entries.filter((e: any) => e.projectId === fx.projectId).map((e: any) => e.action)
    for (const a of ['adjustment.queue', 'signoff.create', 'release.create', 'release.download', 'access.grant']) expect(actions).toContain(a)
    expect((await surveyor.get(`/api/firms/${DEMO.firm}/audit`)).status).toBe(200)
    expect((await chief.get(`/api/firms/${DEMO.firm}/audit`)).status).toBe(403)
  })

  it('filters by action prefix, user and date, and exports CSV', async () => {
    const owner = await as(DEMO.owner)
    const [me] = await useDb().select().from(users).where(eq(users.email, DEMO.client))
    const r = await owner.get(`/api/firms/${DEMO.firm}/audit?action=release.&user=${me!.id}`)
    expect(r.body.entries.length).toBeGreaterThanOrEqual(3)
    for (const e of r.body.entries) { expect(e.action.startsWith('release.')).toBe(true); expect(e.userId).toBe(me!.id) }
    const tomorrow = new Date(Date.now() + 2 * 86_400_000).toISOString().slice(0, 10)
    expect((await owner.get(`/api/firms/${DEMO.firm}/audit?from=${tomorrow}`)).body.entries).toEqual([])
    expect((await owner.get(`/api/firms/${DEMO.firm}/audit?from=yesterday`)).status).toBe(422)
    const csv = await owner.raw(`/api/firms/${DEMO.firm}/audit?format=csv&action=signoff.create`)
    expect(csv.headers.get('content-type')).toContain('text/csv')
    const rows = Papa.parse<Record<string, string>>(await csv.text(), { header: true, skipEmptyLines: true }).data
    expect(rows.some((x) => x.entity_id === String(signoff.id) && x.user === DEMO.surveyor)).toBe(true)
    expect(rows.every((x) => x.action === 'signoff.create')).toBe(true)
    // the export carries the hash chain, so a kept copy anchors the log outside the database
    const [stored] = await useDb().select().from(auditLog).where(and(eq(auditLog.action, 'signoff.create'), eq(auditLog.entityId, String(signoff.id))))
    const exported = rows.find((x) => x.entity_id === String(signoff.id))!
    expect(exported.row_hash).toMatch(/^[0-9a-f]{64}$/)
    expect(exported.row_hash).toBe(stored!.rowHash)
    expect(exported.prev_hash).toBe(stored!.prevHash ?? '')
  })
})

describe('run failed e-mail', () => {
  it('notifyRunFailed tells the person who started the run, with the reason and a link', async () => {
    process.env.TIEPOINT_SMTP_PORT = String(smtpPort)
    const [chiefRow] = await useDb().select().from(users).where(eq(users.email, DEMO.chief))
    const [run] = await useDb().insert(adjustments).values({
      firmId: fx.firmId, projectId: fx.projectId, number: 900, settings: {}, inputHash: 'f'.repeat(64), status: 'failed',
      errorText: 'station KF99 cannot be placed (invented test failure)', createdBy: chiefRow!.id,
    }).returning()
    const since = new Date()
    expect(await notifyRunFailed(run!.id)).toBe(1)
    const mails = await mailsSince(since, 'Run 900 of')
    expect(mails.map((m) => m.to)).toEqual([DEMO.chief])
    expect(mails[0]!.text).toContain('KF99 cannot be placed')
    expect(mails[0]!.text).toContain(`/projects/${fx.projectId}/runs/900`)
  })
})
