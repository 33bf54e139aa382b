// A finished run ready for sign-off: a fresh project of the demo firm with the
// invented demo network (server/db/demo), a lenient tolerance profile so every
// new station passes, and one run computed by the real queue and worker.
import { and, eq, gt, like } from 'drizzle-orm'
import { useDb } from '../../server/db/client'
import { mailboxMessages, projects } from '../../server/db/schema'
import type { Client } from '../support/http'
import { DEMO } from '../support/http'
import { DEMO_CSV, projectWithNetwork, waitForRun } from './adjustments-fixture'

export async function finishedRun(chief: Client, name: string) {
  const fx = await projectWithNetwork(DEMO.firm, name, DEMO_CSV)
  const base = `/api/firms/${DEMO.firm}/projects/${fx.projectId}`
  // A firm rule loose enough for the demo network, created through the API.
  const tol = await chief.post(`/api/firms/${DEMO.firm}/tolerance-profiles`, {
    kind: 'custom', name: `Loose test rule ${fx.projectId}`, mm: 100, ppm: 100, source: 'invented rule for tests',
  })
  if (tol.status !== 201) throw new Error(`tolerance profile: ${tol.status} ${JSON.stringify(tol.body)}`)
  await useDb().update(projects).set({ toleranceProfileId: tol.body.id }).where(eq(projects.id, fx.projectId))
  const r = await chief.post(`${base}/adjustments`, {})
  if (r.status !== 202) throw new Error(`queue: ${r.status} ${JSON.stringify(r.body)}`)
  const status = await waitForRun(async () => (await chief.get(`${base}/adjustments/${r.body.number}/status`)).body, 90_000)
  if (status !== 'done') throw new Error(`the fixture run ended ${status}`)
  return { ...fx, base, runNumber: r.body.number as number, toleranceId: tol.body.id as number }
}

/** Messages received since `since` whose subject contains `subject`. */
export async function mailsSince(since: Date, subject: string) {
  return useDb().select().from(mailboxMessages)
    .where(and(gt(mailboxMessages.receivedAt, since), like(mailboxMessages.subject, `%${subject}%`)))
}
