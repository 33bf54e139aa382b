// The observation kinds as the database enum, the zod schemas and the web app's
// selects see them: taken from the engine's model registry (one model file per
// kind), so adding a kind there adds it everywhere.
export { OBSERVATION_KINDS, KIND_LABELS, type ObservationKind } from '../server/engine/models/registry'
