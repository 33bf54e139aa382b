// E-mail notifications of the sign-off and release workflow, and of failed
// runs. Each message is plain text + HTML (renderMail), in our own words, with
// the firm's name in the footer. A notification never undoes the work that
// caused it: sending errors are logged and reported as a count, not thrown.
import { and, eq, inArray } from 'drizzle-orm'
import { adjustments, firms, memberships, projectAccess, projects, users } from '../db/schema'
import type { Role } from '../db/schema'
import { useDb } from '../db/client'
import { publicUrl, sendMail } from './mail'
import type { Mail } from './mail'

async function firmPeople(firmId: number, roles: Role[]): Promise<{ id: number; email: string; name: string }[]> {
  return useDb().select({ id: users.id, email: users.email, name: users.name }).from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(memberships.firmId, firmId), inArray(memberships.role, roles)))
}

async function projectAndFirm(firmId: number, projectId: number) {
  const [row] = await useDb().select({ project: projects, firm: firms }).from(projects)
    .innerJoin(firms, eq(firms.id, projects.firmId))
    .where(and(eq(projects.firmId, firmId), eq(projects.id, projectId))).limit(1)
  return row ?? null
}

/** Sends one message per recipient (so nobody sees the others' addresses); returns how many were sent. */
async function deliver(recipients: string[], mail: Omit<Mail, 'to'>): Promise<number> {
  let sent = 0
  for (const to of [...new Set(recipients)]) {
    try {
      await sendMail({ ...mail, to })
      sent++
    } catch (error) {
      console.error(`[tiepoint] could not send "${mail.subject}" to ${to}:`, (error as Error).message)
    }
  }
  return sent
}

export async function notifySignoffRequested(a: { firmId: number; projectId: number; runNumber: number; requestedBy: string; note?: string }): Promise<{ recipients: string[]; sent: number }> {
  const pf = await projectAndFirm(a.firmId, a.projectId)
  if (!pf) return { recipients: [], sent: 0 }
  const people = await firmPeople(a.firmId, ['licensed_surveyor'])
  const recipients = people.map((p) => p.email)
  const sent = await deliver(recipients, {
    subject: `Sign-off requested: ${pf.project.name}, run ${a.runNumber}`,
    paragraphs: [
      `${a.requestedBy} asks a licensed surveyor to review run ${a.runNumber} of "${pf.project.name}" and sign off its control points.`,
      ...(a.note ? [`Their note: ${a.note}`] : []),
      'The sign-off page shows the accuracy check against the project tolerance and the run summary. Coordinates must be checked against local regulations and licensed practice before you sign.',
    ],
    link: { url: publicUrl(`/f/${pf.firm.slug}/projects/${pf.project.id}/signoff?run=${a.runNumber}`), label: 'Review and sign off' },
    firmName: pf.firm.name,
  })
  return { recipients, sent }
}

export async function notifySignoffCompleted(a: { firmId: number; projectId: number; runNumber: number; signerName: string; stationCount: number; sha256: string }): Promise<number> {
  const pf = await projectAndFirm(a.firmId, a.projectId)
  if (!pf) return 0
  const people = await firmPeople(a.firmId, ['owner', 'party_chief'])
  return deliver(people.map((p) => p.email), {
    subject: `Signed off: ${pf.project.name}, run ${a.runNumber}`,
    paragraphs: [
      `${a.signerName} signed off ${a.stationCount} control point${a.stationCount === 1 ? '' : 's'} of run ${a.runNumber} of "${pf.project.name}".`,
      `SHA-256 of the signed coordinate list and inputs: ${a.sha256}`,
      'A party chief can now publish a release for the client.',
      'Caution: signed coordinates are released under the signing surveyor\'s responsibility and must be checked against local regulations and licensed practice before use.',
    ],
    link: { url: publicUrl(`/f/${pf.firm.slug}/projects/${pf.project.id}/releases`), label: 'Open releases' },
    firmName: pf.firm.name,
  })
}

export async function notifyReleasePublished(a: { firmId: number; projectId: number; releaseId: number; files: { format: string; sha256: string }[] }): Promise<number> {
  const pf = await projectAndFirm(a.firmId, a.projectId)
  if (!pf) return 0
  const clients = await useDb().select({ email: users.email }).from(projectAccess)
    .innerJoin(users, eq(users.id, projectAccess.userId))
    .where(and(eq(projectAccess.firmId, a.firmId), eq(projectAccess.projectId, a.projectId)))
  return deliver(clients.map((c) => c.email), {
    subject: `New release of ${pf.project.name} from ${pf.firm.name}`,
    paragraphs: [
      `${pf.firm.name} has published signed control coordinates for "${pf.project.name}" (release ${a.releaseId}).`,
      `Files: ${a.files.map((f) => f.format.toUpperCase()).join(', ')}. Each file's SHA-256 is listed beside it, so you can check that what you downloaded is exactly what was published (for example with: sha256sum <file>).`,
      'The coordinates are for use under the signing surveyor\'s responsibility and must be checked against local regulations and licensed practice.',
    ],
    link: { url: publicUrl(`/client?firm=${pf.firm.slug}&project=${pf.project.id}`), label: 'Download the release' },
    firmName: pf.firm.name,
  })
}

/** Called by the adjustment worker when a run ends in failure: tells its creator and the party chiefs. */
export async function notifyRunFailed(runId: number): Promise<number> {
  const db = useDb()
  const [run] = await db.select().from(adjustments).where(eq(adjustments.id, runId)).limit(1)
  if (!run) return 0
  const pf = await projectAndFirm(run.firmId, run.projectId)
  if (!pf) return 0
  // The person who started the run is told; a run without a known starter goes to the party chiefs.
  const [creator] = run.createdBy
    ? await db.select({ email: users.email }).from(users).where(eq(users.id, run.createdBy)).limit(1)
    : []
  const recipients = creator ? [creator.email] : (await firmPeople(run.firmId, ['owner', 'party_chief'])).map((c) => c.email)
  return deliver(recipients, {
    subject: `Run ${run.number} of ${pf.project.name} did not finish`,
    paragraphs: [
      `Run ${run.number} of "${pf.project.name}" stopped without a result.`,
      `Reason: ${run.errorText ?? 'not recorded'}`,
      'Check the observations and the held control named in the reason, then start a new run.',
    ],
    link: { url: publicUrl(`/f/${pf.firm.slug}/projects/${pf.project.id}/runs/${run.number}`), label: 'Open the run' },
    firmName: pf.firm.name,
  })
}
