// Reader for the Tiepoint observation CSV (docs/file-format.md; described in
// our own words in ./README.md). It turns the text of an uploaded file into
// control records and observation records in metres and radians, or into a
// list of every problem found, each naming the file line and the column.
//
// Tokenising is papaparse's (quotes, embedded commas and newlines); this module
// owns line numbers, comments, header handling and the meaning of each field.
// Rules worth knowing:
// - Line numbers are the lines a text editor shows, counting comment and blank
//   lines; a quoted field spanning lines is reported at the line it starts on.
// - An upload is all-or-nothing: any error means ok:false and no records.
// - Default units when the unit cell is blank: m for lengths and control, dms
//   for angles. `sigma` is millimetres for lengths and height differences,
//   arcseconds for angles, whatever the unit column says.
// - hi and ht are in the project's length unit (option heightUnit, m when not
//   given) on every row, whatever the row's own unit column says.
// - The reader never throws, whatever bytes it is given.

import Papa from 'papaparse'
import type {
  BaselineVector,
  ControlRecord,
  InstrumentProfile,
  ObservationKind,
  ObservationRecord,
  ReadIssue,
  ReadResult,
  RecordBatches,
} from '../types'
import { gnssBaseline } from '../models/gnss-baseline'
import { READ_BATCH, collectBatches } from './batches'
import {
  ANGLE_UNITS,
  LENGTH_UNITS,
  METRES_PER,
  RAD_PER_ARCSEC,
  angleUnitOf,
  clip,
  lengthUnitOf,
  parseAngle,
  parseLength,
  parseNumber,
  type AngleUnit,
  type LengthUnit,
} from './units'

export interface CsvReadOptions {
  /**
   * The instrument profile the upload will be adjusted with. The reader does
   * not copy its σ into records (the engine does); it only checks that every
   * row left without a sigma can get one from it.
   */
  profile?: InstrumentProfile
  /**
   * The unit of every hi and ht in the file: the project's length unit (m when
   * not given). One rule for all rows, so a zenith and the slope distance of the
   * same line always read their heights alike.
   */
  heightUnit?: LengthUnit
}

export const CSV_COLUMNS = ['kind', 'at', 'from', 'to', 'value', 'unit', 'sigma', 'hi', 'ht', 'set', 'length', 'note', 'correlation'] as const
type Column = (typeof CSV_COLUMNS)[number]
const REQUIRED_COLUMNS: readonly Column[] = ['kind', 'at', 'to', 'value']

const ANGLE_KINDS = new Set<ObservationKind>(['direction', 'angle', 'zenith', 'azimuth'])
const LENGTH_KINDS = new Set<ObservationKind>(['slope_distance', 'horizontal_distance', 'height_difference'])
const ALL_KINDS = ['control', ...ANGLE_KINDS, ...LENGTH_KINDS, 'gnss_baseline']

// Sanity limits: far beyond any real survey, tight enough to catch a value
// typed into the wrong column or an exponent gone wrong (common practice).
const MAX_COORDINATE_M = 1e8
const MAX_DISTANCE_M = 1e6
const MAX_HEIGHT_DIFFERENCE_M = 1e4
const MAX_INSTRUMENT_HEIGHT_M = 1000
const MAX_SIGMA = 1e6 // mm or arcseconds
const MAX_LENGTH_KM = 1e4
const MAX_NAME_LENGTH = 100
const FULL_CIRCLE = 2 * Math.PI

type Row = (column: Column) => string

/** Reads a Tiepoint observation CSV. Never throws. */
export function readObservationCsv(text: string, options: CsvReadOptions = {}): ReadResult {
  return collectBatches(readObservationCsvBatches(text, options))
}

/**
 * Reads a Tiepoint observation CSV like readObservationCsv, handing the
 * observation records out in batches while it reads (the parser pauses after
 * each batch), so an upload never holds all of them at once. Records are
 * handed out only while no error has been found; the reading goes on to list
 * every error, and the end says whether the file was good (see
 * RecordBatches). Never throws.
 */
export function* readObservationCsvBatches(text: string, options: CsvReadOptions = {}, batchSize = READ_BATCH): RecordBatches {
  try {
    return yield* readCsv(typeof text === 'string' ? text : String(text), options, batchSize)
  } catch (err) {
    // Last resort so that a bug here becomes a clear refusal, not a crash.
    return {
      ok: false,
      errors: [{ line: 1, column: 'file', message: `could not be read (${err instanceof Error ? err.message : String(err)})` }],
      warnings: [],
    }
  }
}

function* readCsv(input: string, options: CsvReadOptions, batchSize: number): RecordBatches {
  // One newline convention keeps papaparse from leaving '\r' in the last field
  // of mixed-ending files; line counts are unchanged by this.
  const text = (input.charCodeAt(0) === 0xfeff ? input.slice(1) : input).replace(/\r\n?/g, '\n')
  const errors: ReadIssue[] = []
  const warnings: ReadIssue[] = []
  const controls: ControlRecord[] = []
  const observations: ObservationRecord[] = []
  const controlSeen = new Map<string, { east?: number; height?: number }>()

  let header: Map<Column, number> | null = null
  let headerWidth = 0

  // Line bookkeeping: each row starts where the previous one ended
  // (meta.cursor), after any '#' lines papaparse skipped as comments.
  let scanned = 0
  let newlinesBefore = 0
  let rowStart = 0
  const lineAt = (offset: number): number => {
    for (; scanned < offset; scanned++) if (text.charCodeAt(scanned) === 10) newlinesBefore++
    return newlinesBefore + 1
  }

  // The parser pauses once a batch is full; the loop below hands it out and resumes it.
  let paused: Papa.Parser | null = null
  let resumedAt = 0
  let complete = false
  let emitted = 0
  Papa.parse<string[]>(text, {
    delimiter: ',',
    newline: '\n',
    quoteChar: '"',
    comments: '#',
    skipEmptyLines: false,
    complete: () => { complete = true },
    step: (result, parser) => {
      takeRow(result)
      if (observations.length >= batchSize) {
        // papaparse resumes on the rest of the text from this row's end, and
        // counts its cursor from there (papaparse 5: ParserHandle.pause)
        resumedAt += result.meta.cursor
        paused = parser
        parser.pause()
      }
    },
  })
  function takeRow(result: Papa.ParseStepResult<string[]>) {
    const fields = result.data
    while (rowStart < text.length && text.charCodeAt(rowStart) === 35 /* # */) {
      const nl = text.indexOf('\n', rowStart)
      rowStart = nl === -1 ? text.length : nl + 1
    }
    const line = lineAt(rowStart)
    rowStart = Math.max(rowStart, resumedAt + result.meta.cursor)

    const first = (fields[0] ?? '').trim()
    if (first.startsWith('#')) return
    if (fields.every((f) => f.trim() === '')) return

    for (const e of result.errors) {
      errors.push({ line, column: 'row', message: quoteErrorMessage(e.code) })
    }
    if (result.errors.length > 0) return

    if (header === null) {
      const h = readHeader(fields, line, errors, warnings)
      header = h
      headerWidth = fields.length
      return
    }
    if (header.size === 0) return // header unusable: its errors are already listed

    if (fields.length > headerWidth && fields.slice(headerWidth).some((f) => f.trim() !== '')) {
      errors.push({
        line,
        column: 'row',
        message: `has ${fields.length} fields but the header has ${headerWidth} (a comma too many, or a note that needs quotes)`,
      })
      return
    }
    const cols = header
    const row: Row = (c) => {
      const i = cols.get(c)
      return i === undefined ? '' : (fields[i] ?? '').trim()
    }
    readRow(row, line, options, errors, warnings, controls, observations, controlSeen)
  }
  while (!complete) {
    const batch = observations.splice(0)
    emitted += batch.length
    if (batch.length > 0 && errors.length === 0) yield batch
    const parser = paused as Papa.Parser | null
    paused = null
    if (!parser) throw new Error('the CSV parser stopped before the end of the text')
    parser.resume()
  }

  if (header === null) {
    errors.push({ line: 1, column: 'header', message: 'no header row found: the file is empty or holds only comments' })
  }
  if (errors.length > 0) return { ok: false, errors, warnings }
  if (controls.length === 0 && observations.length === 0 && emitted === 0) {
    warnings.push({ line: 1, column: 'file', message: 'holds a header but no control or observation rows' })
  }
  if (observations.length > 0) yield observations
  return { ok: true, controls, warnings }
}

function quoteErrorMessage(code: string): string {
  if (code === 'MissingQuotes') return 'a quoted field is never closed (a missing ")'
  if (code === 'InvalidQuotes') return 'a quote sits inside an unquoted field: quote the whole field and double inner quotes ("")'
  return `cannot be split into fields (${code})`
}

function readHeader(fields: string[], line: number, errors: ReadIssue[], warnings: ReadIssue[]): Map<Column, number> {
  const map = new Map<Column, number>()
  let bad = false
  fields.forEach((raw, i) => {
    const name = raw.trim().toLowerCase()
    if ((CSV_COLUMNS as readonly string[]).includes(name)) {
      const col = name as Column
      if (map.has(col)) {
        errors.push({ line, column: col, message: `column '${col}' appears twice in the header` })
        bad = true
      } else map.set(col, i)
    } else {
      warnings.push({
        line,
        column: name === '' ? `#${i + 1}` : clip(name),
        message: name === '' ? `header field ${i + 1} has no name; its values are ignored` : `unknown column '${clip(name)}' is ignored`,
      })
    }
  })
  for (const col of REQUIRED_COLUMNS) {
    if (!map.has(col)) {
      errors.push({ line, column: col, message: `the header has no '${col}' column (required: ${REQUIRED_COLUMNS.join(', ')})` })
      bad = true
    }
  }
  return bad ? new Map() : map
}

function normaliseKind(text: string): string {
  return text.trim().toLowerCase().replace(/[\s-]+/g, '_')
}

function readRow(
  row: Row,
  line: number,
  options: CsvReadOptions,
  errors: ReadIssue[],
  warnings: ReadIssue[],
  controls: ControlRecord[],
  observations: ObservationRecord[],
  controlSeen: Map<string, { east?: number; height?: number }>,
): void {
  const before = errors.length
  const err = (column: string, message: string) => errors.push({ line, column, message })
  const kindText = row('kind')
  const kind = normaliseKind(kindText)
  if (kind === '') {
    err('kind', `is blank (one of ${ALL_KINDS.join(', ')})`)
    return
  }
  if (!ALL_KINDS.includes(kind)) {
    err('kind', `unknown kind '${clip(kindText)}' (one of ${ALL_KINDS.join(', ')})`)
    return
  }
  const at = row('at')
  if (at === '') err('at', 'is blank: name the station')
  else if (at.length > MAX_NAME_LENGTH) err('at', `station name is longer than ${MAX_NAME_LENGTH} characters`)

  if (kind === 'control') {
    readControl(row, line, at, errors, warnings, controls, controlSeen, before)
    return
  }
  const obsKind = kind as ObservationKind
  const to = row('to')
  if (to === '') err('to', 'is blank: name the target station')
  else if (to.length > MAX_NAME_LENGTH) err('to', `station name is longer than ${MAX_NAME_LENGTH} characters`)
  else if (to === at) err('to', `is the same station as at ('${clip(at)}')`)

  if (row('correlation') !== '' && obsKind !== 'gnss_baseline') {
    warnings.push({ line, column: 'correlation', message: `is only used by gnss_baseline rows; ignored for ${obsKind}` })
  }
  if (obsKind === 'gnss_baseline') {
    readBaseline(row, line, at, to, errors, warnings, observations, before)
    return
  }

  let from: string | null = null
  if (obsKind === 'angle') {
    from = row('from')
    if (from === '') err('from', 'is blank: an angle needs the backsight station')
    else if (from.length > MAX_NAME_LENGTH) err('from', `station name is longer than ${MAX_NAME_LENGTH} characters`)
    else if (from === at) err('from', `is the same station as at ('${clip(at)}')`)
    else if (from === to) err('from', `backsight and foresight are the same station ('${clip(from)}')`)
  } else if (row('from') !== '') {
    warnings.push({ line, column: 'from', message: `is only used by angle rows; ignored for ${obsKind}` })
  }

  const isAngle = ANGLE_KINDS.has(obsKind)
  const unitText = row('unit')
  let angleUnit: AngleUnit = 'dms'
  let lengthUnit: LengthUnit = 'm'
  let unitOk = true
  if (unitText !== '') {
    if (isAngle) {
      const u = angleUnitOf(unitText)
      if (u) angleUnit = u
      else {
        unitOk = false
        err('unit', `'${clip(unitText)}' is not an angle unit for ${obsKind} (${ANGLE_UNITS.join(', ')})`)
      }
    } else {
      const u = lengthUnitOf(unitText)
      if (u) lengthUnit = u
      else {
        unitOk = false
        err('unit', `'${clip(unitText)}' is not a length unit for ${obsKind} (${LENGTH_UNITS.join(', ')})`)
      }
    }
  }

  let value = NaN
  const valueText = row('value')
  if (valueText === '') err('value', 'is blank')
  else if (unitOk) {
    const p = isAngle ? parseAngle(valueText, angleUnit) : parseLength(valueText, lengthUnit)
    if (!p.ok) err('value', p.message)
    else {
      value = p.value
      if (isAngle) {
        if (!(value >= 0 && value < FULL_CIRCLE)) {
          err('value', `'${clip(valueText)}' is outside 0 to a full circle (${obsKind} must be ≥ 0 and < 360° / 400 gon)`)
        }
      } else if (obsKind === 'height_difference') {
        if (Math.abs(value) > MAX_HEIGHT_DIFFERENCE_M) err('value', `'${clip(valueText)}' is too large for a height difference`)
      } else if (value <= 0) {
        err('value', `'${clip(valueText)}': a distance must be positive`)
      } else if (value > MAX_DISTANCE_M) {
        err('value', `'${clip(valueText)}' is too large for a distance (over ${MAX_DISTANCE_M / 1000} km)`)
      }
    }
  }

  const sigmaText = row('sigma')
  let sigma: number | null = null
  if (sigmaText !== '') {
    const p = parseNumber(sigmaText)
    if (!p.ok) err('sigma', p.message)
    else if (p.value <= 0) err('sigma', `'${clip(sigmaText)}' must be positive (leave it blank to use the instrument profile)`)
    else if (p.value > MAX_SIGMA) err('sigma', `'${clip(sigmaText)}' is implausibly large`)
    else sigma = isAngle ? p.value * RAD_PER_ARCSEC : p.value / 1000
  }

  // one rule for hi/ht on every row: the file's height unit (the project's length unit)
  const heightUnit: LengthUnit = options.heightUnit ?? 'm'
  const hi = readInstrumentHeight(row('hi'), 'hi', heightUnit, err)
  const ht = readInstrumentHeight(row('ht'), 'ht', heightUnit, err)

  const lengthText = row('length')
  let lengthKm: number | null = null
  if (lengthText !== '') {
    const p = parseNumber(lengthText)
    if (!p.ok) err('length', p.message)
    else if (p.value <= 0) err('length', `'${clip(lengthText)}' must be positive (levelling length in km)`)
    else if (p.value > MAX_LENGTH_KM) err('length', `'${clip(lengthText)}' is implausibly long (km)`)
    else lengthKm = p.value
    if (obsKind !== 'height_difference') {
      warnings.push({ line, column: 'length', message: `is only used by height_difference rows; ignored for ${obsKind}` })
      lengthKm = null
    }
  }
  if (obsKind === 'height_difference' && sigmaText === '' && lengthText === '') {
    err('length', 'is required when sigma is blank: levelling σ comes from σ per √km times √length')
  }

  if (sigmaText === '' && options.profile) {
    const gap = profileGap(obsKind, options.profile)
    if (gap) err('sigma', `is blank and ${gap}`)
  }

  const setText = row('set')
  if (setText !== '' && obsKind !== 'direction') {
    warnings.push({ line, column: 'set', message: `is only used by direction rows; ignored for ${obsKind}` })
  }

  if (errors.length > before) return
  observations.push({
    line,
    kind: obsKind,
    at,
    from,
    to,
    value,
    sigma,
    hi,
    ht,
    set: obsKind === 'direction' && setText !== '' ? setText : null,
    lengthKm,
    note: row('note'),
    unit: isAngle ? angleUnit : lengthUnit,
  })
}

function readInstrumentHeight(
  text: string,
  column: 'hi' | 'ht',
  unit: LengthUnit,
  err: (column: string, message: string) => void,
): number | null {
  if (text === '') return null
  const p = parseLength(text, unit)
  if (!p.ok) {
    err(column, p.message)
    return null
  }
  if (Math.abs(p.value) > MAX_INSTRUMENT_HEIGHT_M) {
    err(column, `'${clip(text)}' is implausibly large for an instrument or target height`)
    return null
  }
  return p.value
}

/** Why the profile cannot weight a row of this kind, or null when it can. */
function profileGap(kind: ObservationKind, profile: InstrumentProfile): string | null {
  const positive = (x: number) => Number.isFinite(x) && x > 0
  switch (kind) {
    case 'direction':
    case 'angle':
    case 'azimuth':
      return positive(profile.directionArcsec) ? null : 'the instrument profile has no direction σ'
    case 'zenith':
      return positive(profile.zenithArcsec) ? null : 'the instrument profile has no zenith σ'
    case 'slope_distance':
    case 'horizontal_distance':
      return positive(profile.distanceMm) || positive(profile.distancePpm)
        ? null
        : 'the instrument profile has no distance σ'
    case 'height_difference':
      return positive(profile.levellingMmPerSqrtKm) ? null : 'the instrument profile has no levelling σ per √km'
    case 'gnss_baseline':
      // a vector carries its own σX σY σZ; no profile value stands in for them
      return 'a GNSS baseline needs σX σY σZ in the sigma column'
  }
}

function readControl(
  row: Row,
  line: number,
  at: string,
  errors: ReadIssue[],
  warnings: ReadIssue[],
  controls: ControlRecord[],
  controlSeen: Map<string, { east?: number; height?: number }>,
  before: number,
): void {
  const err = (column: string, message: string) => errors.push({ line, column, message })
  for (const c of ['from', 'to', 'hi', 'ht', 'set', 'length', 'correlation'] as const) {
    if (row(c) !== '') warnings.push({ line, column: c, message: 'is not used by control rows; ignored' })
  }
  const unitText = row('unit')
  let unit: LengthUnit = 'm'
  if (unitText !== '') {
    const u = lengthUnitOf(unitText)
    if (u) unit = u
    else err('unit', `'${clip(unitText)}' is not a length unit for control (${LENGTH_UNITS.join(', ')})`)
  }
  const valueText = row('value')
  const parts = valueText === '' ? [] : valueText.split(/\s+/)
  if (parts.length === 0) err('value', 'is blank: write "E N", "E N H", or "H" for a benchmark')
  else if (parts.length > 3) err('value', `'${clip(valueText)}' has ${parts.length} numbers: write "E N", "E N H", or "H"`)
  const coords: number[] = []
  if (parts.length >= 1 && parts.length <= 3) {
    for (const part of parts) {
      const p = parseNumber(part)
      if (!p.ok) err('value', p.message)
      else if (Math.abs(p.value * METRES_PER[unit]) > MAX_COORDINATE_M) err('value', `'${clip(part)}' is too large for a coordinate`)
      else coords.push(p.value * METRES_PER[unit])
    }
  }
  const sigmaText = row('sigma')
  const sigmaParts = sigmaText === '' ? [] : sigmaText.split(/\s+/)
  const sds: number[] = []
  for (const part of sigmaParts) {
    const p = parseNumber(part)
    if (!p.ok) err('sigma', p.message)
    else if (p.value <= 0) err('sigma', `'${clip(part)}' must be positive (leave sigma blank to hold the point fixed)`)
    else if (p.value > MAX_SIGMA) err('sigma', `'${clip(part)}' is implausibly large`)
    else sds.push(p.value / 1000)
  }
  // σ count: none (fixed), one per coordinate, or σE σN for an "E N H" row,
  // which weights the position and holds the height fixed.
  const n = parts.length
  const okCount = sigmaParts.length === 0 || sigmaParts.length === n || (n === 3 && sigmaParts.length === 2)
  if (n >= 1 && n <= 3 && !okCount) {
    err('sigma', `has ${sigmaParts.length} values for ${n} coordinates (write one σ in mm per coordinate, or leave blank for fixed)`)
  }
  if (errors.length > before) return

  const horizontal = n >= 2
  const hasHeight = n === 1 || n === 3
  const seen = controlSeen.get(at) ?? {}
  if (horizontal && seen.east !== undefined) {
    err('at', `station '${clip(at)}' already has E N control on line ${seen.east}`)
  }
  if (hasHeight && seen.height !== undefined) {
    err('at', `station '${clip(at)}' already has height control on line ${seen.height}`)
  }
  if (errors.length > before) return
  if (horizontal) seen.east = line
  if (hasHeight) seen.height = line
  controlSeen.set(at, seen)

  const fixed = sds.length === 0
  controls.push({
    line,
    station: at,
    east: horizontal ? coords[0]! : null,
    north: horizontal ? coords[1]! : null,
    height: n === 1 ? coords[0]! : n === 3 ? coords[2]! : null,
    sdEast: horizontal && !fixed ? sds[0]! : null,
    sdNorth: horizontal && !fixed ? sds[1]! : null,
    sdHeight: n === 1 && !fixed ? sds[0]! : n === 3 && sds.length === 3 ? sds[2]! : null,
  })
}

/**
 * Three numbers separated by spaces (a cell like "ΔX ΔY ΔZ"), or one error for
 * the column: how many numbers there are, or which part is not a number.
 */
function threeNumbers(text: string, what: string, err: (message: string) => void): [number, number, number] | null {
  const parts = text.split(/\s+/)
  if (parts.length !== 3) {
    err(`'${clip(text)}' has ${parts.length} number${parts.length === 1 ? '' : 's'}: write three, ${what}, separated by spaces`)
    return null
  }
  const out: number[] = []
  for (const part of parts) {
    const p = parseNumber(part)
    if (!p.ok) {
      err(p.message)
      return null
    }
    out.push(p.value)
  }
  return out as [number, number, number]
}

/**
 * A GNSS baseline row: value "ΔX ΔY ΔZ" in metres (Earth-centred, mark to
 * mark), sigma "σX σY σZ" in mm (required: no instrument profile stands in
 * for a vector's own precision), correlation "ρXY ρXZ ρYZ" or blank. The
 * model's own checks (|ρ| < 1, positive-definite covariance) run last, so the
 * reader and the engine refuse the same rows with the same words.
 */
function readBaseline(
  row: Row,
  line: number,
  at: string,
  to: string,
  errors: ReadIssue[],
  warnings: ReadIssue[],
  observations: ObservationRecord[],
  before: number,
): void {
  const errIn = (column: string) => (message: string) => errors.push({ line, column, message })
  const unitText = row('unit')
  if (unitText !== '' && lengthUnitOf(unitText) !== 'm') {
    errors.push({ line, column: 'unit', message: `'${clip(unitText)}': a GNSS baseline is read in metres only (write m or leave blank)` })
  }
  // A vector is mark to mark: antenna heights belong in the baseline
  // processing, and a height here would be silently ignored — so it is refused.
  for (const c of ['hi', 'ht'] as const) {
    const t = row(c)
    if (t !== '') {
      const p = parseNumber(t)
      if (!(p.ok && p.value === 0)) {
        errors.push({ line, column: c, message: `'${clip(t)}': a GNSS baseline is mark to mark; reduce antenna heights in the baseline processing and leave ${c} blank` })
      }
    }
  }
  for (const c of ['from', 'set', 'length'] as const) {
    if (row(c) !== '') warnings.push({ line, column: c, message: 'is not used by gnss_baseline rows; ignored' })
  }

  const valueText = row('value')
  let d: [number, number, number] | null = null
  if (valueText === '') errors.push({ line, column: 'value', message: 'is blank: write ΔX ΔY ΔZ in metres' })
  else {
    d = threeNumbers(valueText, 'ΔX ΔY ΔZ in metres', errIn('value'))
    if (d && Math.hypot(...d) > MAX_DISTANCE_M) {
      errors.push({ line, column: 'value', message: `'${clip(valueText)}' is too long for a baseline (over ${MAX_DISTANCE_M / 1000} km)` })
      d = null
    }
  }

  const sigmaText = row('sigma')
  let sigmaMm: [number, number, number] | null = null
  if (sigmaText === '') errors.push({ line, column: 'sigma', message: 'is blank: a GNSS baseline needs σX σY σZ in mm (no instrument profile stands in for them)' })
  else {
    sigmaMm = threeNumbers(sigmaText, 'σX σY σZ in mm', errIn('sigma'))
    if (sigmaMm && !sigmaMm.every((x) => x > 0)) {
      errors.push({ line, column: 'sigma', message: `'${clip(sigmaText)}': each σ must be positive (mm)` })
      sigmaMm = null
    } else if (sigmaMm && sigmaMm.some((x) => x > MAX_SIGMA)) {
      errors.push({ line, column: 'sigma', message: `'${clip(sigmaText)}' is implausibly large` })
      sigmaMm = null
    }
  }

  const corrText = row('correlation')
  let correlation: [number, number, number] | null = null
  let corrOk = true
  if (corrText !== '') {
    correlation = threeNumbers(corrText, 'ρXY ρXZ ρYZ', errIn('correlation'))
    if (!correlation) corrOk = false
  }

  if (errors.length > before || !d || !sigmaMm || !corrOk) return
  const vector: BaselineVector = { d, sigma: sigmaMm.map((x) => x / 1000) as [number, number, number], correlation }
  const record: ObservationRecord = {
    line, kind: 'gnss_baseline', at, from: null, to, value: Math.hypot(...d), sigma: null,
    hi: null, ht: null, set: null, lengthKm: null, note: row('note'), unit: 'm', vector,
  }
  // the model's checks: |ρ| < 1 and a positive-definite covariance
  const issues = gnssBaseline.validate(record)
  if (issues.length) {
    for (const i of issues) errors.push({ line, column: i.column, message: corrText !== '' && i.column === 'correlation' ? `'${clip(corrText)}': ${i.message}` : i.message })
    return
  }
  observations.push(record)
}
