// Public surface of the Tiepoint adjustment engine (pure TypeScript): the
// adjustment, its report and the shared types. See README.md for the models.

export * from './types'
export { adjustNetwork, adjustNetworkTimed, DEFAULT_SETTINGS, DEFAULT_REFRACTION, globalTestOf, type PhaseTimings } from './adjust'
export { formatReport, CAUTION } from './report'
export { DEFAULT_PROFILE } from './sigma'
export { MODELS, OBSERVATION_KINDS, KIND_LABELS, aprioriSigma } from './models/registry'
