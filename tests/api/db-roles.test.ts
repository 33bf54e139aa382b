// Least privilege and the audit hash chain: the runtime role (DATABASE_URL)
// may only add and read sign-offs and audit entries, nobody may empty them,
// every audit entry links to the one before it, and `npm run audit:verify`
// (server/db/audit-verify.ts) names an entry changed behind the app's back.
import { spawn } from 'node:child_process'
import { afterAll, describe, expect, it } from 'vitest'
import { eq, isNull } from 'drizzle-orm'
import pg from 'pg'
import { closeDb, dbOn, makePool, useDb, usePool } from '../../server/db/client'
import { auditLog, firms } from '../../server/db/schema'
import { audit, auditPerson, verifyAuditChain } from '../../server/services/audit'
import { DEMO } from '../support/http'

const ownerUrl = process.env.DATABASE_OWNER_URL!
const owner = makePool(ownerUrl, 2)
afterAll(async () => {
  await owner.end()
  await closeDb()
})

const denied = /permission denied/

function run(cmd: string[], env: NodeJS.ProcessEnv): Promise<{ code: number | null; out: string }> {
  return new Promise((resolve) => {
    const p = spawn(cmd[0]!, cmd.slice(1), { env, stdio: ['ignore', 'pipe', 'pipe'] })
    let out = ''
    p.stdout.on('data', (d) => { out += d })
    p.stderr.on('data', (d) => { out += d })
    p.on('exit', (code) => resolve({ code, out }))
  })
}

/** Runs `fn` on one owner connection inside a transaction that is always rolled back (Drizzle can query through that one client). */
async function rolledBack<T>(fn: (c: pg.PoolClient) => Promise<T>): Promise<T> {
  const c = await owner.connect()
  try {
    await c.query('begin')
    return await fn(c)
  } finally {
    await c.query('rollback')
    c.release()
  }
}

describe('two database roles', () => {
  it('the app connects as a runtime role that is not the owner of the schema', () => {
    expect(ownerUrl).toBeTruthy()
    expect(new URL(process.env.DATABASE_URL!).username).toBe('tiepoint_app')
    expect(new URL(ownerUrl).username).toBe('tiepoint')
  })

  it('the runtime role may INSERT and SELECT sign-offs and the audit log, but not UPDATE, DELETE or TRUNCATE them', async () => {
    const p = usePool()
    await expect(p.query('select count(*) from audit_log')).resolves.toBeTruthy()
    await expect(p.query('select count(*) from signoffs')).resolves.toBeTruthy()
    for (const t of ['audit_log', 'signoffs']) {
      await expect(p.query(`update ${t} set firm_id = firm_id where false`)).rejects.toThrow(denied)
      await expect(p.query(`delete from ${t} where false`)).rejects.toThrow(denied)
      await expect(p.query(`truncate ${t}`)).rejects.toThrow(denied)
    }
    const r = await p.query<{ ins: boolean; upd: boolean }>(
      `select has_table_privilege('audit_log', 'INSERT') as ins, has_table_privilege('audit_log', 'UPDATE') as upd`)
    expect(r.rows[0]).toEqual({ ins: true, upd: false })
  })

  it('the runtime role cannot change the schema', async () => {
    await expect(usePool().query('create table tiepoint_probe (x int)')).rejects.toThrow(denied)
    await expect(usePool().query('alter table projects add column probe int')).rejects.toThrow(/must be owner/)
  })

  it('TRUNCATE of sign-offs or the audit log is refused by trigger even for the owner role', async () => {
    for (const t of ['audit_log', 'signoffs']) {
      await expect(rolledBack((c) => c.query(`truncate ${t} cascade`))).rejects.toThrow(/legal record: TRUNCATE is refused/)
    }
  })

  it('refuses to seed the demo firm into a database that is not the project\'s own cluster', async () => {
    const env: NodeJS.ProcessEnv = { ...process.env, DATABASE_URL: 'postgres://someone@db.example.invalid:5432/production' }
    delete env.TIEPOINT_SEED_DEMO
    const r = await run(['node', '--import', 'tsx', 'server/db/seed.ts'], env)
    expect(r.code).toBe(3)
    expect(r.out).toContain('not seeding the demo firm')
    expect(r.out).toContain('TIEPOINT_SEED_DEMO=1')
  })
})

describe('the audit hash chain', () => {
  const firmId = async () => (await useDb().select({ id: firms.id }).from(firms).where(eq(firms.slug, DEMO.firm)))[0]!.id

  it('stays one chain when twenty entries of one firm are written at once', async () => {
    const fid = await firmId()
    await Promise.all(Array.from({ length: 20 }, (_, i) => audit(useDb(), {
      firmId: fid, userId: null, action: 'test.concurrent', entityType: 'test', entityId: i, after: { i, nested: { b: 2, a: [1, 'x'] } },
    })))
    const rows = await useDb().select().from(auditLog).where(eq(auditLog.firmId, fid)).orderBy(auditLog.id)
    // property: every entry's prevHash is the rowHash of the entry before it
    for (let i = 1; i < rows.length; i++) expect(rows[i]!.prevHash).toBe(rows[i - 1]!.rowHash)
    expect(rows[0]!.prevHash).toBeNull()
    expect(new Set(rows.map((r) => r.rowHash)).size).toBe(rows.length)
    const v = await verifyAuditChain(useDb())
    expect(v.problems).toEqual([])
    expect(v.entries).toBeGreaterThanOrEqual(20)
  })

  it('person-level events (no firm) form a chain of their own', async () => {
    await Promise.all(Array.from({ length: 8 }, (_, i) => auditPerson(null, 'test.person', { i })))
    const rows = await useDb().select().from(auditLog).where(isNull(auditLog.firmId)).orderBy(auditLog.id)
    expect(rows.length).toBeGreaterThanOrEqual(8)
    for (let i = 1; i < rows.length; i++) expect(rows[i]!.prevHash).toBe(rows[i - 1]!.rowHash)
    expect((await verifyAuditChain(useDb())).problems).toEqual([])
  })

  it('finds an entry whose content was changed, and one that was removed', async () => {
    const fid = await firmId()
    for (let i = 0; i < 3; i++) await audit(useDb(), { firmId: fid, userId: null, action: 'test.tamper', entityType: 'test', entityId: i, after: { i } })
    const rows = await useDb().select({ id: auditLog.id }).from(auditLog).where(eq(auditLog.action, 'test.tamper')).orderBy(auditLog.id)
    const [a, b, c] = rows.slice(-3).map((r) => r.id)
    const changed = await rolledBack(async (client) => {
      await client.query(`update audit_log set after = '{"i": 99}' where id = $1`, [b])
      return verifyAuditChain(dbOn(client as unknown as pg.Pool))
    })
    expect(changed.problems.map((p) => p.id)).toEqual([b])
    expect(changed.problems[0]!.message).toMatch(/changed after it was written/)

    const removed = await rolledBack(async (client) => {
      await client.query('delete from audit_log where id = $1', [b])
      return verifyAuditChain(dbOn(client as unknown as pg.Pool))
    })
    expect(removed.problems.map((p) => p.id)).toEqual([c])
    expect(removed.problems[0]!.message).toMatch(/does not link/)
    expect(a).toBeLessThan(b!)
  })

  it('npm run audit:verify exits 0 on an intact chain and 1 naming the entry changed behind the app\'s back', async () => {
    const ok = await run(['node', '--import', 'tsx', 'server/db/audit-verify.ts'], process.env)
    expect(ok.out).toMatch(/audit chain intact: \d+ entries/)
    expect(ok.code).toBe(0)

    const [victim] = await useDb().select().from(auditLog).where(eq(auditLog.action, 'test.tamper')).orderBy(auditLog.id).limit(1)
    await owner.query(`update audit_log set action = 'test.forged' where id = $1`, [victim!.id])
    try {
      const bad = await run(['node', '--import', 'tsx', 'server/db/audit-verify.ts'], process.env)
      expect(bad.code).toBe(1)
      expect(bad.out).toContain(`audit entry ${victim!.id}: its content does not match its hash`)
      expect(bad.out).toMatch(/audit chain BROKEN: 1 problem/)
    } finally {
      await owner.query('update audit_log set action = $2 where id = $1', [victim!.id, victim!.action])
    }
  })
})
