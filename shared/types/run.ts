// Shapes of an adjustment run that the server sends and the pages read.
import type { InstrumentProfile } from '../../server/engine/types'

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
