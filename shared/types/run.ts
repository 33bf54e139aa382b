// Shapes of an adjustment run that the server sends and the pages read.
import type { InstrumentProfile, ObservationResult, StationResult } from '../../server/engine/types'

/** Where the a-priori σ of a set's observations came from. */
export type WeightingSource = 'own profile' | 'main profile' | 'built-in default'

/** How one observation set of a run was weighted. */
export interface RunWeighting {
  setId: number
  setName: string
  observations: number
  /** observations whose σ was given in the file itself (those override any profile) */
  sigmaFromFile: number
  source: WeightingSource
  /** the profile's name and values; for the built-in default, the engine's invented values */
  profile: { id: number | null; name: string; values: InstrumentProfile }
}

/** The summary stored with a finished run (server/services/adjustments.ts buildSummary). */
export interface RunSummary {
  converged: boolean
  iterations: number
  dof: number
  sigma0: number | null
  globalTest: { statistic: number; lower: number; upper: number; passed: boolean } | null
  counts: { n: number; u: number; r: number } | null
  health: { conditionEstimate: number | null; dominant: string | null } | null
  critical: { w: number; tau: number | null; delta0: number }
  flagged: number
  weak: number
  excluded: number
  confidence: number
  scaling: 'a-posteriori' | 'a-priori'
  alpha: number
  alpha0: number
  beta0: number
  weakRedundancy: number
  tolerance: { name: string; description: string; source: string } | null
  relative: { checked: number; passed: number; failed: number }
  chance?: { tested: number; expectedFlags: number }
  warnings: string[]
  weighting?: RunWeighting[]
}

export type RunStatus = 'queued' | 'running' | 'done' | 'failed'

/** GET …/adjustments/:number — the run as the server sends it (server/services/adjustments.ts getRun). */
export interface RunDto {
  number: number
  status: RunStatus
  attempts: number
  settings: Record<string, unknown>
  inputHash: string
  createdAt: string
  startedAt: string | null
  finishedAt: string | null
  createdBy: string | null
  errorText: string | null
  summary: Record<string, unknown> | null
  /** per observation set: the profile that weighted it, or the built-in default; null for runs queued before it was recorded */
  weighting: RunWeighting[] | null
  warnings: string[]
  project: { units: 'm' | 'ft' | 'usft'; angleFormat: 'dms' | 'gon'; crs: string; crsDefinition: string | null; tileUrl: string | null }
  /** the CLI's JSON shape (README: npm run adjust -- --json) */
  result: Record<string, unknown> | null
  stations: StationResult[]
  observations: ObservationResult[]
  relative: { from: string; to: string; distance: number; semiMajor: number; semiMinor: number; azimuthDeg: number; semiMajor95: number; allowable: number | null; passes: boolean | null }[]
}

/** GET …/adjustments — one row of the runs list. */
export interface RunListItem {
  number: number
  status: RunStatus
  createdAt: string
  startedAt: string | null
  finishedAt: string | null
  createdBy: string | null
  sigma0: number | null
  globalTestPassed: boolean | null
  flagged: number | null
  errorText: string | null
  inputHash: string
  settings: Record<string, unknown>
}
