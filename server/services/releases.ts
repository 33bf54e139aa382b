// Releases: a signed coordinate list turned into client deliverables (CSV,
// GeoJSON, LandXML, PDF), each stored with its SHA-256. Every download is
// logged in `downloads` and in the audit log.
import { and, desc, eq, inArray, sql } from 'drizzle-orm'
import type { ReleaseCreate } from '../../shared/schemas/releases'
import { findCrs } from '../../shared/crs'
import { adjustments, downloads, projects, releaseFiles, releases, signoffs } from '../db/schema'
import type { Project } from '../db/schema'
import { useDb } from '../db/client'
import type { FirmContext } from '../utils/guard'
import { DomainError, notFound } from '../utils/errors'
import type { AccuracyCheck } from './accuracy-check'
import { audit } from './audit'
import { buildDeliverables } from './deliverables'
import type { DeliverableFormat } from './deliverables'
import { notifyReleasePublished } from './notifications'
import type { SignedStation } from './signoffs'
import { getSignoff, runReportExtras, runSummary, supersededState } from './signoffs'


export const FORMATS = ['csv', 'geojson', 'landxml', 'pdf'] as const

export interface ReleaseFileDto { format: DeliverableFormat; fileName: string; sha256: string; sizeBytes: number; url: string }
export interface ReleaseDto {
  id: number
  signoffId: number
  signoffSha256: string
  signerName: string
  signedAt: string
  runNumber: number | null
  publishedAt: string
  note: string
  stationCount: number
  files: ReleaseFileDto[]
  /** why GeoJSON is absent, when it is */
  geojsonMissingReason: string | null
}

const fileUrl = (firmSlug: string, projectId: number, releaseId: number, format: string) =>
  `/api/firms/${firmSlug}/projects/${projectId}/releases/${releaseId}/files/${format}`

const LOCAL_GEOJSON_REASON = 'GeoJSON is not offered: the project uses a local plane system, which has no defined link to WGS 84 longitude and latitude (RFC 7946 requires WGS 84).'

/** Advisory-lock namespace: (NS, sign-off id) while a release of that sign-off is written. */
const RELEASE_LOCK_NS = 7034

export async function createRelease(ctx: FirmContext, project: Project, body: ReleaseCreate): Promise<ReleaseDto> {
  const { signoff, run } = await getSignoff(ctx.firm.id, project.id, body.signoffId).catch(() => {
    throw new DomainError('invalid', 'No such sign-off in this project', [{ field: 'signoffId', message: 'signoffId: is not a sign-off of this project' }])
  })
  const state = await supersededState(ctx.firm.id, project.id, run)
  if (state.superseded) throw new DomainError('conflict', `${state.reason} Sign off the current run before releasing.`)
  const publishedAt = new Date()
  const db = useDb()
  const out = await db.transaction(async (tx) => {
    // A double-submitted release (same sign-off, publisher and note) makes one record:
    // the sign-off's lock serialises the two requests and the second finds the first.
    await tx.execute(sql`select pg_advisory_xact_lock(${RELEASE_LOCK_NS}, ${signoff.id})`)
    const [same] = await tx.select().from(releases).where(and(eq(releases.firmId, ctx.firm.id), eq(releases.signoffId, signoff.id),
      eq(releases.publishedBy, ctx.user.id), eq(releases.note, body.note ?? ''))).limit(1)
    if (same) {
      const files = await tx.select({ format: releaseFiles.format, fileName: releaseFiles.fileName, sha256: releaseFiles.sha256, sizeBytes: releaseFiles.sizeBytes })
        .from(releaseFiles).where(and(eq(releaseFiles.firmId, ctx.firm.id), eq(releaseFiles.releaseId, same.id))).orderBy(releaseFiles.id)
      return { rel: same, files, replay: true }
    }
    const [rel] = await tx.insert(releases).values({
      firmId: ctx.firm.id, projectId: project.id, signoffId: signoff.id, publishedBy: ctx.user.id, publishedAt, note: body.note ?? '',
    }).returning()
    const files = await buildDeliverables({
      firmName: ctx.firm.name,
      project: {
        id: project.id, name: project.name, crs: project.crs,
        crsName: project.crs === 'local' ? 'Local plane system' : (findCrs(project.crs)?.name ?? project.crs),
        crsDefinition: project.crsDefinition, units: project.units, precisionUnit: project.precisionUnit,
      },
      release: { id: rel!.id, publishedAt },
      signoff: {
        id: signoff.id, signerName: signoff.signerName, licenceNumber: signoff.licenceNumber, licenceJurisdiction: signoff.licenceJurisdiction,
        statement: signoff.statement, signedAt: signoff.signedAt, sha256: signoff.sha256, inputHash: signoff.inputHash,
        stations: signoff.stations as unknown as SignedStation[], accuracyCheck: signoff.accuracyCheck as unknown as AccuracyCheck,
      },
      run: runSummary(run),
      ...(await runReportExtras(run)),
    })
    await tx.insert(releaseFiles).values(files.map((f) => ({
      firmId: ctx.firm.id, releaseId: rel!.id, format: f.format, fileName: f.fileName, contentType: f.contentType,
      content: f.content, sha256: f.sha256, sizeBytes: f.content.length,
    })))
    await tx.update(projects).set({ status: 'released' }).where(and(eq(projects.firmId, ctx.firm.id), eq(projects.id, project.id)))
    await audit(tx, {
      firmId: ctx.firm.id, userId: ctx.user.id, action: 'release.create', entityType: 'release', entityId: rel!.id, projectId: project.id,
      after: { signoffId: signoff.id, signoffSha256: signoff.sha256, files: files.map((f) => ({ format: f.format, sha256: f.sha256 })) },
    })
    return { rel: rel!, files: files.map((f) => ({ format: f.format, fileName: f.fileName, sha256: f.sha256, sizeBytes: f.content.length })), replay: false }
  })
  if (!out.replay) await notifyReleasePublished({ firmId: ctx.firm.id, projectId: project.id, releaseId: out.rel.id, files: out.files })
  return {
    id: out.rel.id,
    signoffId: signoff.id,
    signoffSha256: signoff.sha256,
    signerName: signoff.signerName,
    signedAt: signoff.signedAt.toISOString(),
    runNumber: run.number,
    publishedAt: out.rel.publishedAt.toISOString(),
    note: out.rel.note,
    stationCount: (signoff.stations as unknown[]).length,
    files: out.files.map((f) => ({ format: f.format, fileName: f.fileName, sha256: f.sha256, sizeBytes: f.sizeBytes, url: fileUrl(ctx.firm.slug, project.id, out.rel.id, f.format) })),
    geojsonMissingReason: out.files.some((f) => f.format === 'geojson') ? null : LOCAL_GEOJSON_REASON,
  }
}

export async function listReleases(ctx: FirmContext, project: Project): Promise<ReleaseDto[]> {
  const db = useDb()
  const rows = await db.select({ rel: releases, s: signoffs, runNumber: adjustments.number }).from(releases)
    .innerJoin(signoffs, and(eq(signoffs.id, releases.signoffId), eq(signoffs.firmId, releases.firmId)))
    .innerJoin(adjustments, and(eq(adjustments.id, signoffs.adjustmentId), eq(adjustments.firmId, signoffs.firmId)))
    .where(and(eq(releases.firmId, ctx.firm.id), eq(releases.projectId, project.id)))
    .orderBy(desc(releases.publishedAt), desc(releases.id))
  if (rows.length === 0) return []
  const files = await db.select({
    releaseId: releaseFiles.releaseId, format: releaseFiles.format, fileName: releaseFiles.fileName, sha256: releaseFiles.sha256, sizeBytes: releaseFiles.sizeBytes,
  }).from(releaseFiles)
    .where(and(eq(releaseFiles.firmId, ctx.firm.id), inArray(releaseFiles.releaseId, rows.map((r) => r.rel.id))))
  const order = (f: string) => FORMATS.indexOf(f as DeliverableFormat)
  return rows.map(({ rel, s, runNumber }) => {
    const mine = files.filter((f) => f.releaseId === rel.id).sort((a, b) => order(a.format) - order(b.format))
    return {
      id: rel.id,
      signoffId: s.id,
      signoffSha256: s.sha256,
      signerName: s.signerName,
      signedAt: s.signedAt.toISOString(),
      runNumber,
      publishedAt: rel.publishedAt.toISOString(),
      note: rel.note,
      stationCount: (s.stations as unknown[]).length,
      files: mine.map((f) => ({ format: f.format, fileName: f.fileName, sha256: f.sha256, sizeBytes: f.sizeBytes, url: fileUrl(ctx.firm.slug, project.id, rel.id, f.format) })),
      geojsonMissingReason: mine.some((f) => f.format === 'geojson') ? null : LOCAL_GEOJSON_REASON,
    }
  })
}

/** The bytes of one deliverable; logs the download (downloads + audit log) in one transaction. */
export async function downloadReleaseFile(ctx: FirmContext, project: Project, releaseId: number, format: string, ip: string | null) {
  if (!(FORMATS as readonly string[]).includes(format)) throw notFound('No such file format (csv, geojson, landxml, pdf)')
  const db = useDb()
  const [row] = await db.select({ file: releaseFiles }).from(releaseFiles)
    .innerJoin(releases, and(eq(releases.id, releaseFiles.releaseId), eq(releases.firmId, releaseFiles.firmId)))
    .where(and(eq(releaseFiles.firmId, ctx.firm.id), eq(releases.projectId, project.id), eq(releases.id, releaseId), eq(releaseFiles.format, format as DeliverableFormat)))
    .limit(1)
  if (!row) throw notFound('No such release file')
  await db.transaction(async (tx) => {
    await tx.insert(downloads).values({ firmId: ctx.firm.id, releaseId, format: row.file.format, userId: ctx.user.id, ip })
    await audit(tx, {
      firmId: ctx.firm.id, userId: ctx.user.id, action: 'release.download', entityType: 'release', entityId: releaseId, projectId: project.id,
      after: { format: row.file.format, sha256: row.file.sha256, role: ctx.role },
    })
  })
  return row.file
}
