// Accuracy standards as data (tolerance_profiles) and the formulas that turn a
// profile into an allowable value. Three kinds:
// - relative_ppm: relative positional precision between directly connected
//   points, allowable = a + b·distance at 95 % (ALTA/NSPS Minimum Standard
//   Detail Requirements for ALTA/NSPS Land Title Surveys, 2021, section 3.E:
//   2 cm + 50 ppm), compared with the semi-major axis of the 95 % relative
//   error ellipse.
// - fgdc_95: horizontal accuracy of a point at 95 %, the radius of the circle
//   of FGDC-STD-007.2-1998 (Geospatial Positioning Accuracy Standards, Part 2:
//   Standards for Geodetic Networks), compared with a threshold the firm
//   chooses.
// - custom: a firm's own a mm + b ppm rule, evaluated like relative_ppm.
import { and, asc, eq, sql } from 'drizzle-orm'
import type { ToleranceCreate, ToleranceUpdate } from '../../shared/schemas/tolerance'
import { projects, toleranceProfiles } from '../db/schema'
import { useDb } from '../db/client'
import type { FirmContext } from '../utils/guard'
import { DomainError } from '../utils/errors'
import { audit } from './audit'

export type ToleranceProfileRow = typeof toleranceProfiles.$inferSelect

/**
 * Semi-axes of the 1σ standard error ellipse from σE, σN and their correlation:
 *   σmax², σmin² = ½(σE² + σN²) ± √(¼(σE² − σN²)² + σEN²),  σEN = ρ·σE·σN
 * (the eigenvalues of the 2×2 covariance matrix; common practice).
 */
export function standardEllipseAxes(sdEast: number, sdNorth: number, correlation = 0): { a: number; b: number } {
  const cov = correlation * sdEast * sdNorth
  const mean = (sdEast * sdEast + sdNorth * sdNorth) / 2
  const root = Math.sqrt(((sdEast * sdEast - sdNorth * sdNorth) / 2) ** 2 + cov * cov)
  return { a: Math.sqrt(mean + root), b: Math.sqrt(Math.max(0, mean - root)) }
}

/**
 * FGDC 95 % circular accuracy from the semi-axes of the standard ellipse.
 * FGDC-STD-007.2-1998, Appendix 2.A (computation of horizontal accuracy),
 * approximation of the radius of the 95 % confidence circle (written from memory of
 * the standard's text; checked in tests against NGS data sheets that publish
 * σN, σE, their correlation and the resulting 95 % horizontal accuracy):
 *   r95 = K · σmax,   K = 1.960790 + 0.004071·C + 0.114276·C² + 0.371625·C³,
 *   C = σmin / σmax
 * At C = 1 (circular) K = 2.4508, close to the exact √(−2 ln 0.05) = 2.4477;
 * at C = 0 K = 1.9608, close to the one-dimensional 1.9600.
 */
export function fgdcCircular95FromAxes(a: number, b: number): number {
  const max = Math.max(a, b)
  const min = Math.min(a, b)
  if (max === 0) return 0
  const c = min / max
  return (1.960790 + 0.004071 * c + 0.114276 * c * c + 0.371625 * c * c * c) * max
}

/** FGDC 95 % circular accuracy from σE, σN and the correlation coefficient ρEN. */
export function fgdcHorizontal95(sdEast: number, sdNorth: number, correlation = 0): number {
  const { a, b } = standardEllipseAxes(sdEast, sdNorth, correlation)
  return fgdcCircular95FromAxes(a, b)
}

// ── profiles as data ───────────────────────────────────────────────────────


export interface ToleranceProfileDto {
  id: number
  name: string
  kind: ToleranceProfileRow['kind']
  params: Record<string, number>
  source: string
  /** one line a person can read: "20 mm + 50 ppm at 95 %" */
  rule: string
  /** retired: kept on past runs, not offered for new runs or projects */
  retired: boolean
  retiredAt: string | null
  /** projects of the firm that check against it (list only) */
  projectCount?: number
}

export function describeRule(p: Pick<ToleranceProfileRow, 'kind' | 'params'>): string {
  if (p.kind === 'fgdc_95') return `horizontal accuracy at 95 % (FGDC circular) ≤ ${p.params.thresholdMm ?? 0} mm`
  return `relative precision at 95 % ≤ ${p.params.mm ?? 0} mm + ${p.params.ppm ?? 0} ppm of the distance`
}

export const toleranceDto = (p: ToleranceProfileRow): ToleranceProfileDto => ({
  id: p.id, name: p.name, kind: p.kind, params: p.params, source: p.source, rule: describeRule(p),
  retired: p.retiredAt !== null, retiredAt: p.retiredAt?.toISOString() ?? null,
})

/** Current profiles first, then retired ones, each by name; with how many projects use each. */
export async function listToleranceProfiles(ctx: FirmContext): Promise<ToleranceProfileDto[]> {
  const rows = await useDb().select({
    profile: toleranceProfiles,
    projectCount: sql<number>`(select count(*)::int from ${projects} p where p.firm_id = ${toleranceProfiles.firmId} and p.tolerance_profile_id = ${toleranceProfiles.id})`,
  }).from(toleranceProfiles)
    .where(eq(toleranceProfiles.firmId, ctx.firm.id))
    .orderBy(sql`${toleranceProfiles.retiredAt} is not null`, asc(toleranceProfiles.name))
  return rows.map((r) => ({ ...toleranceDto(r.profile), projectCount: r.projectCount }))
}

export async function getToleranceProfile(firmId: number, id: number | null): Promise<ToleranceProfileRow | null> {
  if (id === null) return null
  const [row] = await useDb().select().from(toleranceProfiles)
    .where(and(eq(toleranceProfiles.firmId, firmId), eq(toleranceProfiles.id, id))).limit(1)
  return row ?? null
}

export async function createToleranceProfile(ctx: FirmContext, body: ToleranceCreate): Promise<ToleranceProfileDto> {
  const params: Record<string, number> = body.kind === 'fgdc_95'
    ? { thresholdMm: body.thresholdMm }
    : { mm: body.mm, ppm: body.ppm, confidence: 0.95 }
  return useDb().transaction(async (tx) => {
    const [row] = await tx.insert(toleranceProfiles)
      .values({ firmId: ctx.firm.id, name: body.name, kind: body.kind, params, source: body.source })
      .onConflictDoNothing().returning()
    if (!row) throw new DomainError('conflict', `A tolerance profile named '${body.name}' already exists`, [{ field: 'name', message: 'name: is already used' }])
    await audit(tx, { firmId: ctx.firm.id, userId: ctx.user.id, action: 'tolerance.create', entityType: 'tolerance_profile', entityId: row.id, after: toleranceDto(row) })
    return toleranceDto(row)
  })
}

/**
 * Edits a profile's name, numbers or source, or retires / restores it. Past runs
 * and sign-offs keep the rule they were checked against (they store a copy), so
 * an edit changes only what later runs check.
 */
export async function updateToleranceProfile(ctx: FirmContext, id: number, body: ToleranceUpdate): Promise<ToleranceProfileDto> {
  return useDb().transaction(async (tx) => {
    const [before] = await tx.select().from(toleranceProfiles)
      .where(and(eq(toleranceProfiles.firmId, ctx.firm.id), eq(toleranceProfiles.id, id))).for('update').limit(1)
    if (!before) throw new DomainError('not_found', 'No such tolerance profile in this firm')
    // the numbers a profile has depend on its kind
    const wrong = before.kind === 'fgdc_95'
      ? (['mm', 'ppm'] as const).filter((k) => body[k] !== undefined)
      : (['thresholdMm'] as const).filter((k) => body[k] !== undefined)
    if (wrong.length) {
      throw new DomainError('invalid', 'Some fields are not valid', wrong.map((k) => ({
        field: k, message: `${k}: does not apply to a ${before.kind === 'fgdc_95' ? 'horizontal accuracy (FGDC 95 %)' : 'relative precision (mm + ppm)'} profile`,
      })))
    }
    const params: Record<string, number> = before.kind === 'fgdc_95'
      ? { thresholdMm: body.thresholdMm ?? before.params.thresholdMm ?? 0 }
      : { mm: body.mm ?? before.params.mm ?? 0, ppm: body.ppm ?? before.params.ppm ?? 0, confidence: before.params.confidence ?? 0.95 }
    const retiredAt = body.retired === undefined ? before.retiredAt : body.retired ? (before.retiredAt ?? new Date()) : null
    if (body.name !== undefined && body.name !== before.name) {
      const [clash] = await tx.select({ id: toleranceProfiles.id }).from(toleranceProfiles)
        .where(and(eq(toleranceProfiles.firmId, ctx.firm.id), eq(toleranceProfiles.name, body.name))).limit(1)
      if (clash) throw new DomainError('conflict', `A tolerance profile named '${body.name}' already exists`, [{ field: 'name', message: 'name: is already used' }])
    }
    const [row] = await tx.update(toleranceProfiles)
      .set({ name: body.name ?? before.name, source: body.source ?? before.source, params, retiredAt })
      .where(and(eq(toleranceProfiles.firmId, ctx.firm.id), eq(toleranceProfiles.id, id))).returning()
    const action = body.retired === true && !before.retiredAt ? 'tolerance.retire' : body.retired === false && before.retiredAt ? 'tolerance.restore' : 'tolerance.update'
    await audit(tx, { firmId: ctx.firm.id, userId: ctx.user.id, action, entityType: 'tolerance_profile', entityId: id, before: toleranceDto(before), after: toleranceDto(row!) })
    return toleranceDto(row!)
  })
}
