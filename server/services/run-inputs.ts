// The exact inputs of an adjustment run, loaded from the database (firm-scoped),
// turned into the engine's input, and hashed. The same function serves the API
// (hash recorded when a run is queued) and the worker (hash of what it really
// adjusted), so a sign-off can later prove which data produced its coordinates.
import { createHash } from 'node:crypto'
import { and, asc, eq, inArray } from 'drizzle-orm'
import type { RunSettings } from '../../shared/schemas/adjustments'
import { useDb } from '../db/client'
import type { Db, Tx } from '../db/client'
import { instrumentProfiles, observationSets, observations, projects, stations, toleranceProfiles } from '../db/schema'
import { DEFAULT_PROFILE } from '../engine/sigma'
import type { RunWeighting, WeightingSource } from '../../shared/types/run'
import { aprioriSigma } from '../engine/models/registry'
import type { AdjustInput, AdjustSettings, ApproximateCoordinate, ControlRecord, InstrumentProfile, ObservationRecord } from '../engine/types'
import type { ToleranceSpec } from './accuracy'

export class RunInputError extends Error {
  constructor(message: string, public field?: string) {
    super(message)
  }
}

export interface RunInputs {
  input: AdjustInput
  engineSettings: Partial<AdjustSettings>
  /** settings with defaults resolved (set ids, tolerance profile) */
  settings: RunSettings & { observationSetIds: number[]; toleranceProfileId: number | null }
  tolerance: ToleranceSpec | null
  stationKinds: Map<string, 'control' | 'new'>
  hash: string
  warnings: string[]
  /** how each observation set was weighted (shown at the top of the run report) */
  weighting: RunWeighting[]
}

/** A list whose items are made one at a time while it is hashed (never held as a second array). */
export class MappedList<T> {
  constructor(readonly items: readonly T[], readonly map: (item: T) => unknown) {}
}

/**
 * SHA-256 of v's canonical JSON (keys sorted, undefined members left out,
 * undefined array items as null: the same data always gives the same bytes),
 * fed to the hash in pieces of about 64 KiB, without the whole text (tens of
 * MB at 10,000 stations) ever being one string. A MappedList is hashed as the
 * array of its mapped items.
 */
export function canonicalSha256(v: unknown): string {
  const hash = createHash('sha256')
  let buf = ''
  const put = (s: string) => {
    buf += s
    if (buf.length >= 1 << 16) {
      hash.update(buf)
      buf = ''
    }
  }
  const walk = (x: unknown): void => {
    if (x instanceof MappedList) {
      put('[')
      for (let i = 0; i < x.items.length; i++) {
        if (i > 0) put(',')
        walk(x.map(x.items[i]))
      }
      put(']')
    } else if (x === null || typeof x !== 'object') put(JSON.stringify(x ?? null))
    else if (Array.isArray(x)) {
      put('[')
      for (let i = 0; i < x.length; i++) {
        if (i > 0) put(',')
        walk(x[i])
      }
      put(']')
    } else {
      const o = x as Record<string, unknown>
      put('{')
      let first = true
      for (const k of Object.keys(o).filter((key) => o[key] !== undefined).sort()) {
        put(`${first ? '' : ','}${JSON.stringify(k)}:`)
        first = false
        walk(o[k])
      }
      put('}')
    }
  }
  walk(v)
  hash.update(buf)
  return hash.digest('hex')
}

const profileOf = (p: typeof instrumentProfiles.$inferSelect): InstrumentProfile => ({
  distanceMm: p.distanceMm, distancePpm: p.distancePpm, directionArcsec: p.directionArcsec, zenithArcsec: p.zenithArcsec,
  centeringInstrumentMm: p.centeringInstrumentMm, centeringTargetMm: p.centeringTargetMm, levellingMmPerSqrtKm: p.levellingMmPerSqrtKm,
})

/**
 * `forNewRun`: the inputs of a run being queued now. Only then is a retired
 * tolerance profile refused; a run queued before the profile was retired, and
 * the sign-off's check that a run's inputs are unchanged, still load it.
 */
export async function loadRunInputs(firmId: number, projectId: number, settings: RunSettings, db: Db | Tx = useDb(), forNewRun = false): Promise<RunInputs> {
  const [project] = await db.select().from(projects).where(and(eq(projects.firmId, firmId), eq(projects.id, projectId))).limit(1)
  if (!project) throw new RunInputError('The project no longer exists')

  const sets = await db.select({ id: observationSets.id, sha256: observationSets.sha256, instrumentProfileId: observationSets.instrumentProfileId, name: observationSets.name })
    .from(observationSets).where(and(eq(observationSets.firmId, firmId), eq(observationSets.projectId, projectId))).orderBy(asc(observationSets.id))
  let setIds = sets.map((s) => s.id)
  if (settings.observationSetIds?.length) {
    const unknown = settings.observationSetIds.filter((id) => !setIds.includes(id))
    if (unknown.length) throw new RunInputError(`observation set ${unknown.join(', ')} is not in this project`, 'observationSetIds')
    setIds = [...settings.observationSetIds].sort((a, b) => a - b)
  }
  if (!setIds.length) throw new RunInputError('This project has no observations yet: upload an observation file first', 'observationSetIds')
  const usedSets = sets.filter((s) => setIds.includes(s.id))

  const toleranceProfileId = settings.toleranceProfileId === undefined ? project.toleranceProfileId : settings.toleranceProfileId
  let tolerance: ToleranceSpec | null = null
  if (toleranceProfileId !== null) {
    const [t] = await db.select().from(toleranceProfiles).where(and(eq(toleranceProfiles.firmId, firmId), eq(toleranceProfiles.id, toleranceProfileId))).limit(1)
    if (!t) throw new RunInputError(`tolerance profile ${toleranceProfileId} does not exist in this firm`, 'toleranceProfileId')
    // retired standards stay on the runs that used them, but no new run checks against one
    if (t.retiredAt && forNewRun) {
      throw new RunInputError(settings.toleranceProfileId === undefined
        ? `the project's tolerance profile '${t.name}' is retired: choose another for this run, or a current one in the project settings`
        : `tolerance profile '${t.name}' is retired: choose a current one`, 'toleranceProfileId')
    }
    tolerance = { id: t.id, name: t.name, kind: t.kind, params: t.params, source: t.source }
  }

  const profileIds = [...new Set(usedSets.map((s) => s.instrumentProfileId).filter((x): x is number => x !== null))]
  const profileRows = profileIds.length
    ? await db.select().from(instrumentProfiles).where(and(eq(instrumentProfiles.firmId, firmId), inArray(instrumentProfiles.id, profileIds)))
    : []
  const profiles = new Map(profileRows.map((p) => [p.id, profileOf(p)]))
  const profileNames = new Map(profileRows.map((p) => [p.id, p.name]))

  const obsRows = await db.select().from(observations)
    .where(and(eq(observations.firmId, firmId), eq(observations.projectId, projectId), inArray(observations.setId, setIds)))
    .orderBy(asc(observations.setId), asc(observations.line), asc(observations.id))
  if (!obsRows.length) throw new RunInputError('The chosen observation sets hold no observations', 'observationSetIds')

  const stationRows = await db.select().from(stations).where(and(eq(stations.firmId, firmId), eq(stations.projectId, projectId))).orderBy(asc(stations.name))
  const holds = new Map(settings.holds.map((h) => [h.station, h]))
  for (const h of settings.holds) {
    const s = stationRows.find((r) => r.name === h.station)
    if (!s) throw new RunInputError(`station ${h.station} does not exist in this project`, 'holds')
    if (h.hold !== 'free' && s.controlEast === null && s.controlNorth === null && s.controlHeight === null) {
      throw new RunInputError(`station ${h.station} has no control values to hold`, 'holds')
    }
  }

  const controls: ControlRecord[] = []
  const approximate: ApproximateCoordinate[] = []
  const warnings: string[] = []
  for (const s of stationRows) {
    const hasControl = s.controlEast !== null || s.controlNorth !== null || s.controlHeight !== null
    const hold = holds.get(s.name)
    // a free network still passes control to the engine, which uses it only as approximate values
    const heldAs = settings.datum === 'free' ? 'stored' : (hold?.hold ?? (hasControl ? 'stored' : 'free'))
    if (hasControl && heldAs !== 'free') {
      const sd = (given: number | undefined, stored: number | null) =>
        heldAs === 'fixed' ? null : heldAs === 'weighted' ? (given !== undefined ? given / 1000 : stored) : stored
      const rec: ControlRecord = {
        line: 0, station: s.name, east: s.controlEast, north: s.controlNorth, height: s.controlHeight,
        sdEast: s.controlEast === null ? null : sd(hold?.sdEastMm, s.sdEast),
        sdNorth: s.controlNorth === null ? null : sd(hold?.sdNorthMm, s.sdNorth),
        sdHeight: s.controlHeight === null ? null : sd(hold?.sdHeightMm, s.sdHeight),
      }
      if (heldAs === 'weighted' && [rec.sdEast, rec.sdNorth, rec.sdHeight].every((v) => v === null)) {
        throw new RunInputError(`station ${s.name} is to be weighted but has no σ: give sdEastMm/sdNorthMm/sdHeightMm`, 'holds')
      }
      controls.push(rec)
    } else {
      const e = s.controlEast ?? s.approxEast
      const n = s.controlNorth ?? s.approxNorth
      const h = s.controlHeight ?? s.approxHeight
      if (e !== null || n !== null || h !== null) approximate.push({ station: s.name, ...(e !== null ? { east: e } : {}), ...(n !== null ? { north: n } : {}), ...(h !== null ? { height: h } : {}) })
    }
  }

  // One instrument profile per run goes to the engine (the one most observations
  // use); observations of sets measured with another profile get their σ here,
  // with lengths taken from measured distances of the same line.
  const setProfile = new Map(usedSets.map((s) => [s.id, s.instrumentProfileId]))
  const countByProfile = new Map<number | null, number>()
  for (const o of obsRows) countByProfile.set(setProfile.get(o.setId) ?? null, (countByProfile.get(setProfile.get(o.setId) ?? null) ?? 0) + 1)
  const mainProfileId = [...countByProfile].sort((a, b) => b[1] - a[1])[0]![0]
  const lengths = new Map<string, number>()
  const key = (a: string, b: string) => (a < b ? `${a}\u0000${b}` : `${b}\u0000${a}`)
  for (const o of obsRows) if (o.kind === 'slope_distance' || o.kind === 'horizontal_distance') lengths.set(key(o.at, o.to), o.value)
  const coords = new Map<string, [number, number]>()
  for (const s of stationRows) {
    const e = s.controlEast ?? s.approxEast
    const n = s.controlNorth ?? s.approxNorth
    if (e !== null && n !== null) coords.set(s.name, [e, n])
  }
  const lengthOf = (a: string, b: string): number | null => {
    const d = lengths.get(key(a, b))
    if (d !== undefined) return d
    const p = coords.get(a)
    const q = coords.get(b)
    return p && q ? Math.hypot(p[0] - q[0], p[1] - q[1]) : null
  }

  const records: ObservationRecord[] = obsRows.map((o) => {
    let sigma = o.sigma
    const pid = setProfile.get(o.setId) ?? null
    // a vector carries its own σX σY σZ (o.vector); no profile weights it
    if (sigma === null && !o.vector && pid !== mainProfileId && pid !== null) {
      // the engine's own σ function, with this set's profile and the lengths known before the run
      sigma = aprioriSigma({ ...o, set: o.setName, sigma: null, vector: o.vector ?? undefined }, { profile: profiles.get(pid)!, length: lengthOf })
      if (sigma === null) warnings.push(`line ${o.line} of set ${o.setId}: σ taken from the run's main instrument profile (no length known to apply its own)`)
    }
    return {
      id: o.id, line: o.line, kind: o.kind, at: o.at, from: o.from, to: o.to, value: o.value, sigma,
      hi: o.hi, ht: o.ht, set: o.setName, lengthKm: o.lengthKm, note: o.note, excluded: o.excluded,
      ...(o.vector ? { vector: o.vector } : {}),
    }
  })

  // a projected CRS: the engine reduces ground distances to the grid (local plane: nothing to reduce)
  const projection = project.crs !== 'local' && project.crsDefinition ? { proj4: project.crsDefinition, geoidSeparationM: project.geoidSeparationM } : undefined
  // the project's geodetic settings go to the engine and into the hash, so a run records what it used
  const refraction = { k: project.refractionK, sigmaK: project.refractionSigmaK }
  const projectHeightM = project.crs === 'local' ? project.projectHeightM : null
  const resolved = { ...settings, observationSetIds: setIds, toleranceProfileId }
  const hashed = {
    projection,
    refraction,
    projectHeightM,
    settings: resolved,
    sets: usedSets.map((s) => ({ id: s.id, sha256: s.sha256, instrumentProfileId: s.instrumentProfileId })),
    profiles: [...profiles].sort((a, b) => a[0] - b[0]),
    observations: new MappedList(obsRows, (o) => ({
      id: o.id, setId: o.setId, line: o.line, kind: o.kind, at: o.at, from: o.from, to: o.to, value: o.value, sigma: o.sigma,
      hi: o.hi, ht: o.ht, setName: o.setName, lengthKm: o.lengthKm, excluded: o.excluded,
      // only vector rows carry the key, so the hash of a run without vectors is what it always was
      ...(o.vector ? { vector: o.vector } : {}),
    })),
    stations: new MappedList(stationRows, (s) => ({
      name: s.name, kind: s.kind, controlEast: s.controlEast, controlNorth: s.controlNorth, controlHeight: s.controlHeight,
      sdEast: s.sdEast, sdNorth: s.sdNorth, sdHeight: s.sdHeight, approxEast: s.approxEast, approxNorth: s.approxNorth, approxHeight: s.approxHeight,
    })),
    tolerance,
  }
  const hash = canonicalSha256(hashed)
  const mainProfile = mainProfileId === null ? undefined : profiles.get(mainProfileId)

  // What weighted each set: its own profile, the run's main profile (a set
  // without a profile goes to the engine with the main one), or the engine's
  // built-in default when no used set names a profile.
  const weighting: RunWeighting[] = usedSets.map((set) => {
    const rows = obsRows.filter((o) => o.setId === set.id)
    const own = set.instrumentProfileId
    const pid = own ?? mainProfileId
    const source: WeightingSource = own !== null ? 'own profile' : pid !== null ? 'main profile' : 'built-in default'
    return {
      setId: set.id,
      setName: set.name,
      observations: rows.length,
      sigmaFromFile: rows.filter((o) => o.sigma !== null || o.vector !== null).length,
      source,
      profile: pid === null ? { id: null, name: 'built-in default', values: { ...DEFAULT_PROFILE } } : { id: pid, name: profileNames.get(pid) ?? `profile ${pid}`, values: profiles.get(pid)! },
    }
  })
  for (const w of weighting) {
    if (w.source === 'built-in default' && w.sigmaFromFile < w.observations) {
      warnings.push(`set ${w.setName}: ${w.observations - w.sigmaFromFile} observation${w.observations - w.sigmaFromFile === 1 ? ' is' : 's are'} weighted with the built-in default σ (invented values), not with an instrument profile of the firm`)
    }
  }
  return {
    input: { controls, observations: records, ...(mainProfile ? { profile: mainProfile } : {}), approximate, ...(projection ? { projection } : {}), refraction, projectHeightM },
    engineSettings: { datum: settings.datum === 'free' ? 'free' : 'as-stored', scaling: settings.scaling, confidence: settings.confidence },
    settings: resolved,
    tolerance,
    stationKinds: new Map(stationRows.map((s) => [s.name, s.kind])),
    hash,
    warnings,
    weighting,
  }
}
