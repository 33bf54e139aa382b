// Shapes of an adjustment run that the server sends and the pages read.
import type { RunSettings } from '../schemas/adjustments'
import type { PackedMap } from '../map-overview'
import type { AdjustmentResult, AdjustSettings, GridReductionSummary, InstrumentProfile, NetworkSummary, ObservationResult, RelativeResult, StationResult } from '../../server/engine/types'

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
  /** observations in use that fail data snooping or the τ test (runs stored before it was recorded lack it) */
  flaggedAny?: number
  /** per network when a run holds both a plane and a height network */
  plane?: NetworkSummary | null
  height?: NetworkSummary | null
  /** the engine's settings as used */
  settings?: AdjustSettings
  gridReduction?: GridReductionSummary | null
  refraction?: AdjustmentResult['refraction'] | null
  /** combined 3D adjustment (GNSS vectors): its model facts for the report; null for a plane and height run */
  network3d?: AdjustmentResult['network3d'] | null
  /** rows stored: stations, observation results and relative precisions */
  rows?: { stations: number; observations: number; relative: number }
  engineMs?: number
}

/** The settings a run was queued with (shared/schemas/adjustments.ts), as stored on the run; older runs may lack newer fields. */
export type RunSettingsDto = Partial<RunSettings> & Record<string, unknown>

/** One pair of the relative precision list. */
export type RunRelative = Pick<RelativeResult, 'from' | 'to' | 'distance' | 'semiMajor' | 'semiMinor' | 'azimuthDeg'> & { semiMajor95: number; allowable: number | null; passes: boolean | null }

/** GET …/adjustments/:number/overview — what the map and the two histograms draw (server/services/run-results.ts mapData, distributions). */
/** GET …/adjustments/:number/overview — the packed map (shared/map-overview.ts) and the histograms. */
export type RunOverview = PackedMap & {
  distributions: {
    w: { from: number; width: number; counts: number[] }
    redundancy: { edges: number[]; counts: number[] }
  }
}

export type RunStatus = 'queued' | 'running' | 'done' | 'failed'

/** GET …/adjustments/:number — the run as the server sends it (server/services/adjustments.ts getRun). */
export interface RunDto {
  number: number
  status: RunStatus
  attempts: number
  settings: RunSettingsDto
  inputHash: string
  createdAt: string
  startedAt: string | null
  finishedAt: string | null
  createdBy: string | null
  errorText: string | null
  summary: RunSummary | null
  /** per observation set: the profile that weighted it, or the built-in default; null for runs queued before it was recorded */
  weighting: RunWeighting[] | null
  warnings: string[]
  project: { units: 'm' | 'ft' | 'usft'; angleFormat: 'dms' | 'gon'; crs: string; crsDefinition: string | null; tileUrl: string | null }
  /** the CLI's JSON shape (README: npm run adjust -- --json) */
  result: Record<string, unknown> | null
  stations: StationResult[]
  observations: ObservationResult[]
  relative: RunRelative[]
  /** rows in each list; the arrays above hold only the first page */
  totals: { stations: number; observations: number; relative: number }
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
  settings: RunSettingsDto
}
