// Units at the edges of the engine: parsing what people type (lengths in
// metres or feet, angles in degrees, degrees-minutes-seconds, gon or radians)
// into metres and radians, and formatting engine values back for display.
// The engine itself only ever sees metres and radians (docs/architecture.md, Data).
//
// Definitions used here:
// - international foot = 0.3048 m exactly, and U.S. survey foot = 1200/3937 m:
//   Federal Register 24 FR 5348 (1959), "Refinement of values for the yard and
//   the pound"; NIST Handbook 44, Appendix C.
// - gon (grad): a full circle is 400 gon, so 1 gon = π/200 rad (ISO 80000-3).
// - 1° = 60′, 1′ = 60″; a full circle is 360°.
//
// Parsers never throw: they return { ok: false, message } with a sentence a
// person can act on, so the file readers can attach line and column.

export type LengthUnit = 'm' | 'ft' | 'usft'
export type AngleUnit = 'deg' | 'dms' | 'gon' | 'rad'

export const LENGTH_UNITS: readonly LengthUnit[] = ['m', 'ft', 'usft']
export const ANGLE_UNITS: readonly AngleUnit[] = ['deg', 'dms', 'gon', 'rad']

/** Metres per unit, exact by definition (see header). */
export const METRES_PER: Readonly<Record<LengthUnit, number>> = {
  m: 1,
  ft: 0.3048,
  usft: 1200 / 3937,
}

export const RAD_PER_DEG = Math.PI / 180
export const RAD_PER_GON = Math.PI / 200
export const RAD_PER_ARCSEC = Math.PI / (180 * 3600)

export type Parsed = { ok: true; value: number } | { ok: false; message: string }

// A plain decimal number, optionally signed, optionally with an exponent.
// Deliberately stricter than Number(): Number('') is 0, Number('0x10') is 16
// and Number('Infinity') is Infinity, none of which belong in a survey file.
const NUMBER_RE = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/

/** Parses a plain decimal number; rejects blanks, hex, NaN, Infinity and overflow. */
export function parseNumber(text: string): Parsed {
  const t = text.trim()
  if (t === '') return { ok: false, message: 'is blank' }
  if (!NUMBER_RE.test(t)) return { ok: false, message: `'${clip(t)}' is not a number` }
  const value = Number(t)
  if (!Number.isFinite(value)) return { ok: false, message: `'${clip(t)}' is too large` }
  return { ok: true, value }
}

/** Accepts the unit names people type, case-insensitively; null if unknown. */
export function lengthUnitOf(text: string): LengthUnit | null {
  const t = text.trim().toLowerCase()
  if (t === 'm' || t === 'metre' || t === 'meter' || t === 'metres' || t === 'meters') return 'm'
  if (t === 'ft' || t === 'foot' || t === 'feet' || t === 'ift') return 'ft'
  if (t === 'usft' || t === 'us ft' || t === 'us-ft' || t === 'ussurveyfoot' || t === 'us survey foot') return 'usft'
  return null
}

/** Accepts the unit names people type, case-insensitively; null if unknown. */
export function angleUnitOf(text: string): AngleUnit | null {
  const t = text.trim().toLowerCase()
  if (t === 'deg' || t === 'degree' || t === 'degrees' || t === 'dd') return 'deg'
  if (t === 'dms') return 'dms'
  if (t === 'gon' || t === 'grad' || t === 'grads' || t === 'gons') return 'gon'
  if (t === 'rad' || t === 'radian' || t === 'radians') return 'rad'
  return null
}

/** Parses a length written in `unit` and returns metres. */
export function parseLength(text: string, unit: LengthUnit): Parsed {
  const n = parseNumber(text)
  if (!n.ok) return n
  return { ok: true, value: n.value * METRES_PER[unit] }
}

/** Parses an angle written in `unit` and returns radians. */
export function parseAngle(text: string, unit: AngleUnit): Parsed {
  if (unit === 'dms') return parseDms(text)
  const n = parseNumber(text)
  if (!n.ok) return n
  if (unit === 'deg') return { ok: true, value: n.value * RAD_PER_DEG }
  if (unit === 'gon') return { ok: true, value: n.value * RAD_PER_GON }
  return { ok: true, value: n.value }
}

// Degrees, minutes, seconds. Accepted spellings (all with an optional sign):
//   123°45'06.7"   123° 45′ 06.7″   123 45 06.7   123-45-06.7   123 45   123
// The degree and minute parts must be whole numbers, minutes and seconds must
// be below 60. A lone number with a decimal point ("123.4506") is refused:
// it could be decimal degrees or the packed dd.mmss of some data collectors,
// and guessing wrong moves a point by metres.
export function parseDms(text: string): Parsed {
  const original = text.trim()
  if (original === '') return { ok: false, message: 'is blank' }
  let t = original
  let sign = 1
  if (t.startsWith('-') || t.startsWith('+')) {
    if (t.startsWith('-')) sign = -1
    t = t.slice(1).trim()
  }
  let parts: string[]
  if (/[°'"′″]/.test(t)) {
    // Symbol form: every part must carry its symbol, in order.
    const m = /^(?:(\d+)\s*°)?\s*(?:(\d+)\s*['′])?\s*(?:(\d+(?:\.\d*)?|\.\d+)\s*(?:"|″|''|′′))?$/.exec(t)
    if (!m || (m[1] === undefined && m[2] === undefined && m[3] === undefined)) {
      return { ok: false, message: `'${clip(original)}' is not an angle in degrees, minutes and seconds` }
    }
    parts = [m[1] ?? '0', m[2] ?? '0', m[3] ?? '0']
  } else if (/^\d+-\d+(?:-\d+(?:\.\d*)?)?$/.test(t)) {
    parts = t.split('-')
  } else {
    parts = t.split(/\s+/)
  }
  if (parts.length > 3 || parts.some((p) => !/^(?:\d+(?:\.\d*)?|\.\d+)$/.test(p))) {
    return { ok: false, message: `'${clip(original)}' is not an angle in degrees, minutes and seconds` }
  }
  if (parts.length === 1 && parts[0]!.includes('.')) {
    return {
      ok: false,
      message: `'${clip(original)}' is ambiguous in unit dms: write it as degrees minutes seconds (e.g. 123 45 06.7) or use unit deg`,
    }
  }
  const whole = parts.slice(0, parts.length - 1)
  if (whole.some((p) => p.includes('.'))) {
    return { ok: false, message: `'${clip(original)}': only the last part of a DMS angle may have decimals` }
  }
  const d = Number(parts[0])
  const m = parts.length > 1 ? Number(parts[1]) : 0
  const s = parts.length > 2 ? Number(parts[2]) : 0
  if (m >= 60) return { ok: false, message: `'${clip(original)}': minutes must be below 60` }
  if (s >= 60) return { ok: false, message: `'${clip(original)}': seconds must be below 60` }
  const deg = d + m / 60 + s / 3600
  if (!Number.isFinite(deg)) return { ok: false, message: `'${clip(original)}' is too large` }
  return { ok: true, value: sign * deg * RAD_PER_DEG }
}

// Packed "dd.mmss" as LandXML's angularUnit "decimal dd.mm.ss" (e.g. 123.4506
// = 123°45'06"). Only the LandXML reader uses it; CSV users write dms instead.
export function parsePackedDms(text: string): Parsed {
  const n = parseNumber(text)
  if (!n.ok) return n
  const sign = n.value < 0 ? -1 : 1
  const a = Math.abs(n.value)
  const d = Math.floor(a)
  // Work on a rounded decimal string to avoid 0.45 becoming 0.4499999.
  const frac = (a - d).toFixed(12)
  const digits = frac.slice(2)
  const m = Number(digits.slice(0, 2))
  const s = Number(digits.slice(2, 4) + '.' + digits.slice(4))
  if (m >= 60) return { ok: false, message: `'${clip(text.trim())}': minutes must be below 60` }
  if (s >= 60) return { ok: false, message: `'${clip(text.trim())}': seconds must be below 60` }
  return { ok: true, value: sign * (d + m / 60 + s / 3600) * RAD_PER_DEG }
}

/**
 * Formats radians as degrees, minutes, seconds: `123°45'06.7"`.
 * Rounding carries (59.96″ at one decimal becomes the next minute).
 */
export function formatDms(rad: number, decimals = 1): string {
  if (!Number.isFinite(rad)) return String(rad)
  const dec = Math.max(0, Math.min(10, Math.trunc(decimals)))
  const scale = 10 ** dec
  // Round once, in units of the last shown decimal of a second, then split.
  let total = Math.round((Math.abs(rad) / RAD_PER_DEG) * 3600 * scale)
  const sign = rad < 0 && total > 0 ? '-' : ''
  const perMinute = 60 * scale
  const perDegree = 3600 * scale
  const d = Math.floor(total / perDegree)
  total -= d * perDegree
  const m = Math.floor(total / perMinute)
  total -= m * perMinute
  const s = (total / scale).toFixed(dec).padStart(dec > 0 ? dec + 3 : 2, '0')
  return `${sign}${d}°${String(m).padStart(2, '0')}'${s}"`
}

/** Formats radians as gon, number only (the caller shows the unit). */
export function formatGon(rad: number, decimals = 4): string {
  return (rad / RAD_PER_GON).toFixed(Math.max(0, Math.min(12, Math.trunc(decimals))))
}

/** Formats metres in `unit`, number only (the caller shows the unit). */
export function formatLength(m: number, unit: LengthUnit, decimals = 3): string {
  return (m / METRES_PER[unit]).toFixed(Math.max(0, Math.min(12, Math.trunc(decimals))))
}

/** Shortens echoed input so one bad field cannot blow up an error list. */
export function clip(text: string, max = 40): string {
  return text.length > max ? text.slice(0, max) + '…' : text
}
