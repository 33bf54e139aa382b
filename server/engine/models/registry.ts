// The observation kinds Tiepoint knows, one model per file. The database enum,
// the zod schemas and the web app's selects take their list from here; adding a
// kind is one model file, its tests and a line in the format description.

import { angle } from './angle'
import { azimuth } from './azimuth'
import { direction } from './direction'
import { gnssBaseline } from './gnss-baseline'
import { heightDifference } from './height-difference'
import { horizontalDistance } from './horizontal-distance'
import { slopeDistance } from './slope-distance'
import type { ObservationRecord } from '../types'
import type { ModelIssue, ObservationModel, SigmaContext } from './types'
import { zenith } from './zenith'

export const MODELS = [direction, angle, zenith, slopeDistance, horizontalDistance, azimuth, heightDifference, gnssBaseline] as const

export type ObservationKind = (typeof MODELS)[number]['kind']

/** The kinds in their usual order (database enum order). */
export const OBSERVATION_KINDS = MODELS.map((m) => m.kind) as unknown as readonly [ObservationKind, ...ObservationKind[]]

export const KIND_LABELS: Record<ObservationKind, string> = Object.fromEntries(MODELS.map((m) => [m.kind, m.label])) as Record<ObservationKind, string>

const BY_KIND = new Map<string, ObservationModel>(MODELS.map((m) => [m.kind, m as ObservationModel]))

export function modelOf(kind: string): ObservationModel | undefined {
  return BY_KIND.get(kind)
}

export function isAngularKind(kind: string): boolean {
  return BY_KIND.get(kind)?.quantity === 'angle'
}

/**
 * The a-priori σ of one row as the adjustment uses it (m or rad): the row's own
 * σ when it has one, else the profile's for its kind and geometry. The engine
 * and the observations table both call this; null when the geometry it needs
 * (a length) is not known yet.
 */
export function aprioriSigma(o: ObservationRecord, ctx: SigmaContext): number | null {
  if (o.sigma !== null) return o.sigma
  const m = BY_KIND.get(o.kind)
  return m ? m.profileSigma(o, ctx) : null
}

/** The engine's checks of a row: the model's own, plus σ finite and positive whatever its source. */
export function validateRecord(o: ObservationRecord): ModelIssue[] {
  const m = BY_KIND.get(o.kind)
  if (!m) return [{ column: 'kind', message: `unknown observation kind '${o.kind}'` }]
  const issues = m.validate(o)
  if (o.sigma !== null && !(Number.isFinite(o.sigma) && o.sigma > 0)) issues.push({ column: 'sigma', message: 'must be a positive number' })
  return issues
}
