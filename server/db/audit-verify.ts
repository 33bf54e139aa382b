// npm run audit:verify — walks every firm's audit hash chain and names each
// entry that was changed, removed, inserted or written outside the chain.
// Exit 0 when every link holds, 1 when one does not, 2 when it could not run.
// Reads as the owner role when DATABASE_OWNER_URL is set (read-only here).
import { fileURLToPath } from 'node:url'
import { dbOn, makePool, ownerDatabaseUrl } from './client'
import { verifyAuditChain } from '../services/audit'

export async function main(): Promise<number> {
  const pool = makePool(ownerDatabaseUrl(), 2)
  try {
    const r = await verifyAuditChain(dbOn(pool))
    for (const p of r.problems.slice(0, 200)) console.log(`${p.firmId === null ? 'person-level events' : `firm ${p.firmId}`}, audit entry ${p.id}: ${p.message}`)
    if (r.problems.length > 200) console.log(`… and ${r.problems.length - 200} more`)
    console.log(r.problems.length
      ? `audit chain BROKEN: ${r.problems.length} problem(s) in ${r.entries} entries of ${r.firms} chain(s)`
      : `audit chain intact: ${r.entries} entries in ${r.firms} chain(s)`)
    return r.problems.length ? 1 : 0
  } finally {
    await pool.end()
  }
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  main().then((code) => { process.exitCode = code }).catch((e) => {
    console.error('[tiepoint] audit verification could not run:', e instanceof Error ? e.message : e)
    process.exitCode = 2
  })
}
