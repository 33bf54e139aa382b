// Tiepoint's data model (docs/architecture.md, Data). One file so the whole model is
// visible at once. Columns are camelCase here and snake_case in PostgreSQL
// (drizzle `casing: 'snake_case'`). Every firm-owned table carries firm_id and
// its indexes start with it: every query filters by the firm.
import { sql } from 'drizzle-orm'
import { OBSERVATION_KINDS } from '../engine/models/registry'
import type { BaselineVector } from '../engine/types'
import {
  type AnyPgColumn,
  bigint,
  boolean,
  customType,
  doublePrecision,
  foreignKey,
  index,
  integer,
  jsonb,
  pgEnum,
  pgTable,
  primaryKey,
  text,
  timestamp,
  uniqueIndex,
  varchar,
} from 'drizzle-orm/pg-core'

const bytea = customType<{ data: Buffer; driverData: Buffer }>({
  dataType: () => 'bytea',
})

const id = () => integer().primaryKey().generatedAlwaysAsIdentity()
const timestamps = {
  createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  updatedAt: timestamp({ withTimezone: true }).notNull().defaultNow().$onUpdate(() => new Date()),
}
const firmRef = () => integer().notNull().references(() => firms.id, { onDelete: 'cascade' })

export const roleEnum = pgEnum('role', ['owner', 'party_chief', 'field_crew', 'licensed_surveyor', 'client'])
export const unitsEnum = pgEnum('units', ['m', 'ft', 'usft'])
export const angleFormatEnum = pgEnum('angle_format', ['dms', 'gon'])
export const projectStatusEnum = pgEnum('project_status', ['collecting', 'adjusted', 'signed', 'released'])
export const stationKindEnum = pgEnum('station_kind', ['control', 'new'])
export const fileFormatEnum = pgEnum('file_format', ['csv', 'landxml', 'manual'])
// the observation kinds come from the engine's model registry (one model file per kind)
export const observationKindEnum = pgEnum('observation_kind', OBSERVATION_KINDS)
/** kinds of a result row: the observation kinds and the coordinate observations of weighted control */
type ResultKind = (typeof OBSERVATION_KINDS)[number] | 'control'
export const resultKindEnum = pgEnum('result_kind', [...OBSERVATION_KINDS, 'control'] as [ResultKind, ...ResultKind[]])
export const componentEnum = pgEnum('coordinate_component', ['east', 'north', 'height', 'dx', 'dy', 'dz'])
export const runStatusEnum = pgEnum('run_status', ['queued', 'running', 'done', 'failed'])
export const toleranceKindEnum = pgEnum('tolerance_kind', ['relative_ppm', 'fgdc_95', 'custom'])
export const deliverableEnum = pgEnum('deliverable', ['csv', 'geojson', 'landxml', 'pdf'])
/** how a feet project shows precisions (σ, ellipse axes, allowables): millimetres or hundredths of its foot */
export const precisionUnitEnum = pgEnum('precision_unit', ['mm', 'hundredth_ft'])

// ── people and firms ─────────────────────────────────────────────────────────

export const firms = pgTable('firms', {
  id: id(),
  slug: text().notNull().unique(),
  name: text().notNull(),
  /** optional settings: { tileUrl?: string } */
  settings: jsonb().$type<{ tileUrl?: string | null }>().notNull().default({}),
  ...timestamps,
})

export const users = pgTable('users', {
  id: id(),
  email: text().notNull().unique(),
  name: text().notNull(),
  /** null until an invited person sets a password */
  passwordHash: text(),
  licenceNumber: text(),
  licenceJurisdiction: text(),
  /** raised by a password change or reset: sessions signed with an older version end */
  sessionVersion: integer().notNull().default(0),
  ...timestamps,
})

export const memberships = pgTable('memberships', {
  id: id(),
  firmId: firmRef(),
  userId: integer().notNull().references(() => users.id, { onDelete: 'cascade' }),
  role: roleEnum().notNull(),
  ...timestamps,
}, (t) => [uniqueIndex('memberships_firm_user').on(t.firmId, t.userId), index('memberships_user').on(t.userId)])

export const invitations = pgTable('invitations', {
  id: id(),
  firmId: firmRef(),
  email: text().notNull(),
  role: roleEnum().notNull(),
  tokenHash: text().notNull().unique(),
  invitedBy: integer().references(() => users.id, { onDelete: 'set null' }),
  expiresAt: timestamp({ withTimezone: true }).notNull(),
  acceptedAt: timestamp({ withTimezone: true }),
  ...timestamps,
}, (t) => [index('invitations_firm').on(t.firmId, t.email)])

/** One-time password-reset links; belong to a person, not a firm. */
export const passwordResets = pgTable('password_resets', {
  id: id(),
  userId: integer().notNull().references(() => users.id, { onDelete: 'cascade' }),
  tokenHash: text().notNull().unique(),
  expiresAt: timestamp({ withTimezone: true }).notNull(),
  usedAt: timestamp({ withTimezone: true }),
  ...timestamps,
})

/** Personal API tokens; act with their owner's roles. Only the hash is kept. */
export const apiTokens = pgTable('api_tokens', {
  id: id(),
  userId: integer().notNull().references(() => users.id, { onDelete: 'cascade' }),
  name: text().notNull(),
  tokenHash: text().notNull().unique(),
  /** first characters, shown in lists so a person can tell tokens apart */
  prefix: text().notNull(),
  lastUsedAt: timestamp({ withTimezone: true }),
  revokedAt: timestamp({ withTimezone: true }),
  ...timestamps,
}, (t) => [index('api_tokens_user').on(t.userId)])

// ── firm resources ──────────────────────────────────────────────────────────

export const crews = pgTable('crews', {
  id: id(),
  firmId: firmRef(),
  name: text().notNull(),
  ...timestamps,
}, (t) => [uniqueIndex('crews_firm_name').on(t.firmId, t.name)])

export const crewMembers = pgTable('crew_members', {
  id: id(),
  firmId: firmRef(),
  crewId: integer().notNull().references(() => crews.id, { onDelete: 'cascade' }),
  userId: integer().notNull().references(() => users.id, { onDelete: 'cascade' }),
  ...timestamps,
}, (t) => [uniqueIndex('crew_members_firm_crew_user').on(t.firmId, t.crewId, t.userId)])

/** A-priori precision of an instrument and its set-up (distance σ = a mm + b ppm). */
export const instrumentProfiles = pgTable('instrument_profiles', {
  id: id(),
  firmId: firmRef(),
  name: text().notNull(),
  distanceMm: doublePrecision().notNull(),
  distancePpm: doublePrecision().notNull(),
  directionArcsec: doublePrecision().notNull(),
  zenithArcsec: doublePrecision().notNull(),
  centeringInstrumentMm: doublePrecision().notNull(),
  centeringTargetMm: doublePrecision().notNull(),
  levellingMmPerSqrtKm: doublePrecision().notNull(),
  /** invented preset shipped as an example, not a maker's specification */
  isExample: boolean().notNull().default(false),
  ...timestamps,
}, (t) => [uniqueIndex('instrument_profiles_firm_name').on(t.firmId, t.name)])

/** Accuracy standards as data, each with its published source beside it. */
export const toleranceProfiles = pgTable('tolerance_profiles', {
  id: id(),
  firmId: firmRef(),
  name: text().notNull(),
  kind: toleranceKindEnum().notNull(),
  /** relative_ppm / custom: { mm, ppm, confidence }; fgdc_95: { thresholdMm } */
  params: jsonb().$type<Record<string, number>>().notNull(),
  source: text().notNull(),
  /** retired: kept on the runs and sign-offs that used it, no longer offered for new runs or projects */
  retiredAt: timestamp({ withTimezone: true }),
  ...timestamps,
}, (t) => [uniqueIndex('tolerance_profiles_firm_name').on(t.firmId, t.name)])

export const projects = pgTable('projects', {
  id: id(),
  firmId: firmRef(),
  name: text().notNull(),
  description: text().notNull().default(''),
  /** 'local' or 'EPSG:<code>' */
  crs: text().notNull(),
  /** proj4 definition of the CRS (null for a local plane) */
  crsDefinition: text(),
  units: unitsEnum().notNull().default('m'),
  angleFormat: angleFormatEnum().notNull().default('dms'),
  /** feet projects: precisions in mm or hundredths of a foot (metre projects always mm; shared/precision.ts) */
  precisionUnit: precisionUnitEnum().notNull().default('mm'),
  status: projectStatusEnum().notNull().default('collecting'),
  toleranceProfileId: integer().references(() => toleranceProfiles.id, { onDelete: 'set null' }),
  /** geoid separation N (m) for the whole network: ellipsoidal height = height + N (projected CRS) */
  geoidSeparationM: doublePrecision().notNull().default(0),
  /** coefficient of refraction k for zenith angles and its σ (common practice 0.13 ± 0.05) */
  refractionK: doublePrecision().notNull().default(0.13),
  refractionSigmaK: doublePrecision().notNull().default(0.05),
  /** local plane only: the height ground distances are reduced to (null = as measured) */
  projectHeightM: doublePrecision(),
  createdBy: integer().references(() => users.id, { onDelete: 'set null' }),
  ...timestamps,
}, (t) => [index('projects_firm').on(t.firmId, t.id)])

export const projectCrews = pgTable('project_crews', {
  id: id(),
  firmId: firmRef(),
  projectId: integer().notNull().references(() => projects.id, { onDelete: 'cascade' }),
  crewId: integer().notNull().references(() => crews.id, { onDelete: 'cascade' }),
  ...timestamps,
}, (t) => [uniqueIndex('project_crews_firm_project_crew').on(t.firmId, t.projectId, t.crewId)])

/** Client users who may see a project's releases. */
export const projectAccess = pgTable('project_access', {
  id: id(),
  firmId: firmRef(),
  projectId: integer().notNull().references(() => projects.id, { onDelete: 'cascade' }),
  userId: integer().notNull().references(() => users.id, { onDelete: 'cascade' }),
  grantedBy: integer().references(() => users.id, { onDelete: 'set null' }),
  ...timestamps,
}, (t) => [uniqueIndex('project_access_firm_project_user').on(t.firmId, t.projectId, t.userId)])

/** Stations in metres (project units are a display choice). sd null = held fixed. */
export const stations = pgTable('stations', {
  id: id(),
  firmId: firmRef(),
  projectId: integer().notNull().references(() => projects.id, { onDelete: 'cascade' }),
  name: text().notNull(),
  description: text().notNull().default(''),
  kind: stationKindEnum().notNull().default('new'),
  approxEast: doublePrecision(),
  approxNorth: doublePrecision(),
  approxHeight: doublePrecision(),
  controlEast: doublePrecision(),
  controlNorth: doublePrecision(),
  controlHeight: doublePrecision(),
  sdEast: doublePrecision(),
  sdNorth: doublePrecision(),
  sdHeight: doublePrecision(),
  ...timestamps,
}, (t) => [uniqueIndex('stations_firm_project_name').on(t.firmId, t.projectId, t.name)])

/** An uploaded file, kept byte-for-byte with its SHA-256 (legal record). */
export const observationSets = pgTable('observation_sets', {
  id: id(),
  firmId: firmRef(),
  projectId: integer().notNull().references(() => projects.id, { onDelete: 'cascade' }),
  name: text().notNull(),
  format: fileFormatEnum().notNull(),
  content: bytea().notNull(),
  sizeBytes: integer().notNull(),
  sha256: text().notNull(),
  crewId: integer().references(() => crews.id, { onDelete: 'set null' }),
  instrumentProfileId: integer().references(() => instrumentProfiles.id, { onDelete: 'set null' }),
  uploadedBy: integer().references(() => users.id, { onDelete: 'set null' }),
  uploadedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  /** { lines, observations, controls, warnings: [...] } */
  parseReport: jsonb().$type<Record<string, unknown>>().notNull().default({}),
  ...timestamps,
}, (t) => [uniqueIndex('observation_sets_firm_project_sha').on(t.firmId, t.projectId, t.sha256)])

/** Observations in SI units (metres, radians); `unit` records what the file used. */
export const observations = pgTable('observations', {
  id: id(),
  firmId: firmRef(),
  projectId: integer().notNull().references(() => projects.id, { onDelete: 'cascade' }),
  setId: integer().notNull().references(() => observationSets.id, { onDelete: 'cascade' }),
  line: integer().notNull(),
  kind: observationKindEnum().notNull(),
  at: text().notNull(),
  from: text(),
  to: text().notNull(),
  value: doublePrecision().notNull(),
  unit: text().notNull().default(''),
  /** σ override in metres / radians; null = from the instrument profile */
  sigma: doublePrecision(),
  hi: doublePrecision(),
  ht: doublePrecision(),
  setName: text(),
  lengthKm: doublePrecision(),
  note: text().notNull().default(''),
  excluded: boolean().notNull().default(false),
  /** value as read from the file, kept when a person edits `value` */
  originalValue: doublePrecision(),
  /** gnss_baseline only: ΔX ΔY ΔZ (m), σX σY σZ (m), ρXY ρXZ ρYZ — `value` holds the length */
  vector: jsonb().$type<BaselineVector>(),
  ...timestamps,
}, (t) => [
  index('observations_firm_project').on(t.firmId, t.projectId, t.kind),
  index('observations_firm_set').on(t.firmId, t.setId, t.line),
])

// ── adjustments and results ─────────────────────────────────────────────────

export const adjustments = pgTable('adjustments', {
  id: id(),
  firmId: firmRef(),
  projectId: integer().notNull().references(() => projects.id, { onDelete: 'cascade' }),
  /** 1, 2, 3 … per project */
  number: integer().notNull(),
  settings: jsonb().$type<Record<string, unknown>>().notNull(),
  /** SHA-256 over the exact inputs and settings */
  inputHash: text().notNull(),
  status: runStatusEnum().notNull().default('queued'),
  attempts: integer().notNull().default(0),
  startedAt: timestamp({ withTimezone: true }),
  finishedAt: timestamp({ withTimezone: true }),
  /**
   * The run's typed summary (RunSummary in server/services/run-results.ts):
   * global figures only. Stations, observations and relative precisions live
   * in their own tables, the one source of truth of a finished run.
   */
  summary: jsonb().$type<Record<string, unknown>>(),
  errorText: text(),
  createdBy: integer().references(() => users.id, { onDelete: 'set null' }),
  ...timestamps,
}, (t) => [
  uniqueIndex('adjustments_firm_project_number').on(t.firmId, t.projectId, t.number),
  // the target of the result tables' one (firm, run) foreign key
  uniqueIndex('adjustments_firm_id').on(t.firmId, t.id),
])

// The three result tables of a run are written with COPY, up to ~160,000 rows
// for a 10,000-station run, and PostgreSQL checks a foreign key once per row.
// So each has one composite key (firm_id, adjustment_id) → adjustments (which
// also proves the firm matches the run's), instead of one key to firms and one
// to adjustments; deleting a run, project or firm still removes its results.
const runResultKey = (name: string, t: { firmId: AnyPgColumn; adjustmentId: AnyPgColumn }) =>
  foreignKey({ name, columns: [t.firmId, t.adjustmentId], foreignColumns: [adjustments.firmId, adjustments.id] }).onDelete('cascade')

export const adjustedStations = pgTable('adjusted_stations', {
  id: id(),
  firmId: integer().notNull(),
  adjustmentId: integer().notNull(),
  name: text().notNull(),
  kind: stationKindEnum().notNull(),
  fixed: boolean().notNull(),
  east: doublePrecision(),
  north: doublePrecision(),
  height: doublePrecision(),
  sdEast: doublePrecision(),
  sdNorth: doublePrecision(),
  sdHeight: doublePrecision(),
  semiMajor: doublePrecision(),
  semiMinor: doublePrecision(),
  azimuthDeg: doublePrecision(),
  semiMajor95: doublePrecision(),
  semiMinor95: doublePrecision(),
  /** which components are held or weighted as control in this run */
  controlledEast: boolean().notNull().default(false),
  controlledNorth: boolean().notNull().default(false),
  controlledHeight: boolean().notNull().default(false),
}, (t) => [runResultKey('adjusted_stations_run_fk', t), 
  // one run's rows in stored order: the "as adjusted" order and the CSV read it without a sort
  index('adjusted_stations_run_order').on(t.firmId, t.adjustmentId, t.id),
  // the coordinates table's default order, names natural (KF2 before KF10; collation from migration 0008), read without a sort
  index('adjusted_stations_run_name').on(t.firmId, t.adjustmentId, sql`${t.name} collate "tiepoint_natural"`, t.id)])

export const observationResults = pgTable('observation_results', {
  id: id(),
  firmId: integer().notNull(),
  adjustmentId: integer().notNull(),
  /**
   * the observation this row reports on. No foreign key: a run's record stays
   * as it was computed even if the observation is deleted later (whoever acts
   * on the id looks it up in the project first), and it spares a check per row.
   */
  observationId: integer(),
  line: integer().notNull(),
  kind: resultKindEnum().notNull(),
  /** coordinate component of a 'control' row */
  component: componentEnum(),
  at: text().notNull(),
  from: text(),
  to: text().notNull(),
  /** observed and adjusted value: metres, or decimal degrees for angles (valueUnit) */
  observed: doublePrecision().notNull(),
  adjusted: doublePrecision(),
  valueUnit: text().notNull(),
  /** residual, σ and MDB: metres, or arcseconds for angles (residualUnit) */
  residual: doublePrecision(),
  sigma: doublePrecision(),
  residualUnit: text().notNull(),
  redundancy: doublePrecision(),
  w: doublePrecision(),
  tau: doublePrecision(),
  mdb: doublePrecision(),
  mdbEffect: doublePrecision(),
  flagged: boolean().notNull().default(false),
  tauFlagged: boolean().notNull().default(false),
  weak: boolean().notNull().default(false),
  excluded: boolean().notNull().default(false),
  remark: text(),
  combinedFactor: doublePrecision(),
  elevationFactor: doublePrecision(),
  scaleFactor: doublePrecision(),
  /**
   * gnss_baseline component rows: the test of the whole vector (the same on its
   * three rows) — statistic, critical value and its distribution, flag — and
   * the residual vector in local east/north/up at `at` (m)
   */
  vectorStatistic: doublePrecision(),
  vectorCritical: doublePrecision(),
  vectorDistribution: text(),
  vectorFlagged: boolean(),
  residualE: doublePrecision(),
  residualN: doublePrecision(),
  residualU: doublePrecision(),
}, (t) => [runResultKey('observation_results_run_fk', t), 
  index('observation_results_run_order').on(t.firmId, t.adjustmentId, t.id),
  // the residual table's default order (largest |w| first, as pageObservations sorts): the run report's
  // first page is read from the index instead of sorting every observation of the run
  index('observation_results_run_abs_w').on(t.firmId, t.adjustmentId, sql`abs(${t.w}) desc nulls last`, t.id),
  // the few observations that fail (FAILS in server/services/run-results.ts, word for word), in the same
  // order: the residual table's "fails" view and the verdict's list without reading the whole run
  index('observation_results_run_fails').on(t.firmId, t.adjustmentId, sql`abs(${t.w}) desc nulls last`, t.id)
    .where(sql`(not excluded and (flagged or tau_flagged or coalesce(vector_flagged, false)))`)])

/**
 * The run page's overview (the packed map and the histograms, see
 * shared/map-overview.ts) as the JSON text the route sends, made once in the
 * transaction that stores the run's results: they never change afterwards,
 * and grouping 100,000 observations into lines on every page view would not
 * be quick.
 */
export const runOverviews = pgTable('run_overviews', {
  firmId: integer().notNull(),
  adjustmentId: integer().notNull(),
  body: text().notNull(),
}, (t) => [primaryKey({ name: 'run_overviews_pk', columns: [t.firmId, t.adjustmentId] }), runResultKey('run_overviews_run_fk', t)])

export const relativePrecisions = pgTable('relative_precisions', {
  id: id(),
  firmId: integer().notNull(),
  adjustmentId: integer().notNull(),
  fromStation: text().notNull(),
  toStation: text().notNull(),
  distance: doublePrecision().notNull(),
  semiMajor: doublePrecision().notNull(),
  semiMinor: doublePrecision().notNull(),
  azimuthDeg: doublePrecision().notNull(),
  semiMajor95: doublePrecision().notNull(),
  sdDistance: doublePrecision(),
  allowable: doublePrecision(),
  passes: boolean(),
}, (t) => [runResultKey('relative_precisions_run_fk', t), 
  index('relative_precisions_run_order').on(t.firmId, t.adjustmentId, t.id),
  // the relative-precision table's default order, the pair's names natural (from, then to), read without a sort
  index('relative_precisions_run_pair').on(t.firmId, t.adjustmentId, sql`${t.fromStation} collate "tiepoint_natural"`, sql`${t.toStation} collate "tiepoint_natural"`, t.id)])

// ── sign-off, release, audit ────────────────────────────────────────────────

/** Immutable: a trigger refuses UPDATE and DELETE (server/db/sql). */
export const signoffs = pgTable('signoffs', {
  id: id(),
  firmId: firmRef(),
  projectId: integer().notNull().references(() => projects.id, { onDelete: 'restrict' }),
  adjustmentId: integer().notNull().references(() => adjustments.id, { onDelete: 'restrict' }),
  signerId: integer().notNull().references(() => users.id, { onDelete: 'restrict' }),
  signerName: text().notNull(),
  licenceNumber: text().notNull(),
  licenceJurisdiction: text().notNull(),
  statement: text().notNull(),
  /** the signed coordinate list, canonical order */
  stations: jsonb().$type<Record<string, unknown>[]>().notNull(),
  accuracyCheck: jsonb().$type<Record<string, unknown>>().notNull(),
  inputHash: text().notNull(),
  sha256: text().notNull(),
  signedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
}, (t) => [index('signoffs_firm_project').on(t.firmId, t.projectId)])

export const releases = pgTable('releases', {
  id: id(),
  firmId: firmRef(),
  projectId: integer().notNull().references(() => projects.id, { onDelete: 'cascade' }),
  signoffId: integer().notNull().references(() => signoffs.id, { onDelete: 'restrict' }),
  publishedBy: integer().references(() => users.id, { onDelete: 'set null' }),
  publishedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  note: text().notNull().default(''),
}, (t) => [index('releases_firm_project').on(t.firmId, t.projectId)])

export const releaseFiles = pgTable('release_files', {
  id: id(),
  firmId: firmRef(),
  releaseId: integer().notNull().references(() => releases.id, { onDelete: 'cascade' }),
  format: deliverableEnum().notNull(),
  fileName: text().notNull(),
  contentType: text().notNull(),
  content: bytea().notNull(),
  sha256: text().notNull(),
  sizeBytes: integer().notNull(),
}, (t) => [uniqueIndex('release_files_firm_release_format').on(t.firmId, t.releaseId, t.format)])

export const downloads = pgTable('downloads', {
  id: id(),
  firmId: firmRef(),
  releaseId: integer().notNull().references(() => releases.id, { onDelete: 'cascade' }),
  format: deliverableEnum().notNull(),
  userId: integer().references(() => users.id, { onDelete: 'set null' }),
  ip: text(),
  at: timestamp({ withTimezone: true }).notNull().defaultNow(),
}, (t) => [index('downloads_firm_release').on(t.firmId, t.releaseId)])

/** firm_id null: a person-level event (sign-in, password, tokens, profile), shown on that person's profile. */
export const auditLog = pgTable('audit_log', {
  id: bigint({ mode: 'number' }).primaryKey().generatedAlwaysAsIdentity(),
  firmId: integer().references(() => firms.id, { onDelete: 'cascade' }),
  userId: integer().references(() => users.id, { onDelete: 'set null' }),
  action: text().notNull(),
  entityType: text().notNull(),
  entityId: text(),
  projectId: integer(),
  beforeHash: text(),
  afterHash: text(),
  before: jsonb(),
  after: jsonb(),
  at: timestamp({ withTimezone: true }).notNull().defaultNow(),
  /** The firm's hash chain (server/services/audit.ts): the previous entry's rowHash, null for the first. */
  prevHash: text(),
  /** SHA-256 of prevHash and this entry's content. */
  rowHash: text(),
}, (t) => [index('audit_log_firm_at').on(t.firmId, t.at), index('audit_log_firm_id').on(t.firmId, t.id), index('audit_log_user_at').on(t.userId, t.at)])

/** Development and test mailbox: what the in-process SMTP server received. */
export const mailboxMessages = pgTable('mailbox_messages', {
  id: id(),
  to: text().notNull(),
  /** the SMTP envelope's recipients, lower-cased: a person sees a message only when their address is one of these */
  recipients: text().array().notNull().default(sql`'{}'::text[]`),
  from: text().notNull(),
  subject: text().notNull(),
  text: text().notNull(),
  html: text(),
  receivedAt: timestamp({ withTimezone: true }).notNull().default(sql`now()`),
})

/**
 * Sign-in throttle counters, shared by every app process (rate-limiter-flexible's
 * PostgreSQL store; the table layout is the one that library expects).
 */
export const rateLimits = pgTable('rate_limits', {
  key: varchar({ length: 255 }).primaryKey(),
  points: integer().notNull().default(0),
  expire: bigint({ mode: 'number' }),
})

export type Role = (typeof roleEnum.enumValues)[number]
export type Firm = typeof firms.$inferSelect
export type User = typeof users.$inferSelect
export type Project = typeof projects.$inferSelect
export type Station = typeof stations.$inferSelect
export type ObservationRow = typeof observations.$inferSelect
export type ObservationSetRow = typeof observationSets.$inferSelect
export type Adjustment = typeof adjustments.$inferSelect
export type Signoff = typeof signoffs.$inferSelect
