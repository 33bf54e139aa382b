// What the sign-off, release, audit and observation-set routes send the pages.
// The services build these (server/services/signoffs.ts, releases.ts,
// access.ts, observations.ts, audit-log.ts); server/services/dto-contract.ts
// makes the type check fail when a service's DTO stops matching these.

/** One signed station, in the project's stored metres. */
export interface SignedStationDto {
  name: string
  kind: 'control' | 'new'
  fixed: boolean
  east: number
  north: number
  height: number | null
  sdEast: number | null
  sdNorth: number | null
  sdHeight: number | null
  semiMajor95: number | null
  semiMinor95: number | null
  azimuthDeg: number | null
}

/** The accuracy check of a run against its tolerance profile. */
export interface AccuracyCheckDto {
  profile: { name: string; rule: string; source: string } | null
  items: { type: 'pair' | 'point'; from: string; to: string | null; distance: number | null; value: number; allowable: number; passes: boolean }[]
  passed: boolean
  failing: string[]
  note: string
}

/** GET …/signoffs — a stored sign-off and whether newer data superseded it. */
export interface SignoffDto {
  id: number
  runNumber: number
  signerName: string
  licenceNumber: string
  licenceJurisdiction: string
  statement: string
  stations: SignedStationDto[]
  accuracyCheck: AccuracyCheckDto
  inputHash: string
  sha256: string
  signedAt: string
  superseded: boolean
  supersededReason: string | null
}

/** GET …/signoffs/preview?run=N — what a licensed surveyor reads before signing. */
export interface SignoffPreviewDto {
  run: {
    number: number
    sigma0: number | null
    globalTest: { statistic: number; lower: number; upper: number; passed: boolean | null } | null
    counts: { n: number; u: number; r: number } | null
    alpha?: number | null
  }
  /** `items` lists the failing ones first, at most 200; `itemCount` says how many there are */
  check: AccuracyCheckDto & { itemCount: number }
  /** one page of the stations that can be signed */
  stations: (SignedStationDto & { passes: boolean; selectedByDefault: boolean })[]
  stationPage: { page: number; size: number; total: number }
  /** the run's control points, held fixed or weighted, whatever the page */
  control: { name: string; fixed: boolean }[]
  /** how many stations a sign-off without a list signs */
  defaultCount: number
  /** their names when few enough to choose from; null: the default set is signed as a whole */
  defaultStations: string[] | null
  /** statistical tests the run did not pass; signing then needs acknowledgeFailedTests */
  testWarnings: string[]
}

export interface ReleaseFileDto { format: 'csv' | 'geojson' | 'landxml' | 'pdf'; fileName: string; sha256: string; sizeBytes: number; url: string }

/** GET …/releases — one release with its files. */
export interface ReleaseDto {
  id: number
  signoffId: number
  signoffSha256: string
  signerName: string
  signedAt: string
  runNumber: number | null
  publishedAt: string
  stationCount: number
  files: ReleaseFileDto[]
  geojsonMissingReason: string | null
}

/** GET …/access — a client who may see the project's releases. */
export interface AccessDto { userId: number; email: string; name: string; grantedAt: string; accountReady: boolean }
/** POST …/access — the client granted access, and whether an account was made for them. */
export interface AccessGrantDto { access: AccessDto; created: boolean; newAccount: boolean }

/** GET …/observation-sets — one uploaded set. */
export interface ObservationSetListDto { id: number; name: string }

/** One entry of the firm's audit log. */
export interface AuditEntryDto {
  id: number
  at: string
  action: string
  entityType: string
  entityId: string | number | null
  projectId: number | null
  projectName: string | null
  userId: number | null
  userName: string | null
  userEmail: string | null
  beforeHash: string | null
  afterHash: string | null
  after: unknown
}
/** GET /api/firms/:firm/audit — one page of the audit log with the filter choices. */
export interface AuditPageDto { entries: AuditEntryDto[]; total: number; actions: string[]; people: { id: number; name: string }[] }
