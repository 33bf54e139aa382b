// Fuzzing bench: 100,000 generated inputs, each through both observation
// readers (server/engine/io/csv.ts, landxml.ts) and every zod schema exported
// from shared/schemas. A crash is anything thrown, or a reader answer that is
// not { ok: true, … } / { ok: false, errors: [one or more with a line] }; a
// schema must answer safeParse without throwing. Prints the counts and the
// first crashes (with fast-check's seed to replay them); never a timing target.
//
//   node --import tsx tests/bench/fuzz.ts [runs]      (or npm run bench)
import { readdirSync } from 'node:fs'
import { join } from 'node:path'
import fc from 'fast-check'
import type { ZodType } from 'zod'
import { readObservationCsv } from '../../server/engine/io/csv'
import { readLandXml } from '../../server/engine/io/landxml'

const RUNS = Number(process.argv[2] ?? 100_000)
const SEED = Number(process.env.TIEPOINT_FUZZ_SEED ?? 20261203)

async function schemas(): Promise<{ name: string; schema: ZodType }[]> {
  const dir = join(import.meta.dirname, '../../shared/schemas')
  const out: { name: string; schema: ZodType }[] = []
  for (const f of readdirSync(dir).filter((x) => x.endsWith('.ts')).sort()) {
    const mod = (await import(join(dir, f))) as Record<string, unknown>
    for (const [k, v] of Object.entries(mod)) {
      if (v && typeof v === 'object' && typeof (v as { safeParse?: unknown }).safeParse === 'function') out.push({ name: `${f}:${k}`, schema: v as ZodType })
    }
  }
  return out
}

// Text that looks like our files often enough to go deep into the readers.
const KINDS = ['control', 'direction', 'angle', 'zenith', 'slope_distance', 'horizontal_distance', 'azimuth', 'height_difference', 'gnss_baseline', 'teleport', '']
const UNITS = ['m', 'ft', 'usft', 'deg', 'dms', 'gon', 'rad', 'mm', '']
const cell = fc.oneof(
  fc.constantFrom(...KINDS, ...UNITS, 'A', 'B', 'CP1', '1.5', '-0', 'NaN', 'Infinity', '1e309', '123 45 06.7', `123°45'06.7"`, '400.0000', '"', '""', '#'),
  fc.double({ noNaN: false }).map(String),
  fc.string({ maxLength: 12 }),
  // awkward characters: NUL, a lone surrogate, BOM, replacement, degree sign, quotes, separators
  fc.array(fc.constantFrom('\u0000', '\uD800', '\uDFFF', '\uFEFF', '\uFFFD', '°', '′', '″', 'é', '"', ',', ';', '\t', ' ', '\n'), { maxLength: 6 }).map((a) => a.join('')),
)
const header = fc.constantFrom('kind,at,from,to,value,unit,sigma,hi,ht,set,length,note', 'KIND,AT,TO,VALUE', 'kind,at,from,to,value,unit,sigma,hi,ht,set,length,note,correlation', '')
const csvText = fc.tuple(header, fc.array(fc.array(cell, { maxLength: 14 }), { maxLength: 8 }), fc.constantFrom('\n', '\r\n', '\r'))
  .map(([h, rows, nl]) => [h, ...rows.map((r) => r.join(','))].join(nl))

const attr = fc.tuple(fc.constantFrom('name', 'pntSurv', 'pntRef', 'linearUnit', 'angularUnit', 'directionUnit', 'horizAngle', 'zenithAngle', 'slopeDistance', 'targetHeight', 'instrumentHeight', 'stationName', 'id', 'azimuth', 'horizDistance'), cell)
  .map(([k, v]) => ` ${k}="${String(v).replace(/[<&"]/g, '')}"`)
const element: fc.Memo<string> = fc.memo((depth) => fc.tuple(
  fc.constantFrom('LandXML', 'Units', 'Metric', 'Imperial', 'CgPoints', 'CgPoint', 'Survey', 'InstrumentSetup', 'InstrumentPoint', 'RawObservation', 'TargetPoint', 'Backsight', 'ObservationGroup', 'Foo'),
  fc.array(attr, { maxLength: 4 }),
  depth > 1 ? fc.array(element(depth - 1), { maxLength: 3 }) : fc.constant([] as string[]),
  fc.oneof(fc.constant(''), cell.map(String)),
).map(([name, attrs, kids, text]) => `<${name}${attrs.join('')}>${text}${kids.join('')}</${name}>`))
const units = '<Units><Metric linearUnit="meter" angularUnit="decimal degrees" directionUnit="decimal degrees"/></Units>'
const xmlText = fc.tuple(fc.constantFrom('<?xml version="1.0"?>', '', '<!DOCTYPE x [<!ENTITY e "boom">]>'), fc.boolean(), fc.array(element(3), { maxLength: 3 }), fc.constantFrom('', '<', '&e;', ']]>'))
  .map(([a, wrap, kids, c]) => (wrap ? `${a}<LandXML version="1.2">${units}${kids.join('')}</LandXML>${c}` : a + kids.join('') + c))

const anyText = fc.oneof({ weight: 3, arbitrary: csvText }, { weight: 3, arbitrary: xmlText }, { weight: 1, arbitrary: fc.string({ maxLength: 200 }) })
const anyJson = fc.oneof(fc.jsonValue({ maxDepth: 3 }), fc.dictionary(fc.constantFrom('name', 'crs', 'units', 'statement', 'password', 'rows', 'email', 'role', 'confidence', 'holds', 'stations', 'observationSetIds', 'kind', 'value', 'mm', 'ppm'), fc.oneof(fc.jsonValue({ maxDepth: 2 }), cell)))

function readerOk(r: unknown): boolean {
  const x = r as { ok?: unknown; errors?: { line?: unknown }[]; observations?: unknown; controls?: unknown }
  if (x?.ok === true) return Array.isArray(x.observations) && Array.isArray(x.controls)
  if (x?.ok === false) return Array.isArray(x.errors) && x.errors.length > 0 && x.errors.every((e) => Number.isInteger(e.line) && (e.line as number) >= 1)
  return false
}

async function main() {
  const all = await schemas()
  const crashes: string[] = []
  const counts = { csvOk: 0, csvRefused: 0, xmlOk: 0, xmlRefused: 0, schemaAccepted: 0, schemaRefused: 0 }
  const crash = (what: string, input: unknown, e: unknown) => {
    if (crashes.length < 20) crashes.push(`${what}: ${e instanceof Error ? e.message : String(e)} — input ${JSON.stringify(input)?.slice(0, 200)}`)
    else crashes.push('')
  }
  const t0 = performance.now()
  fc.assert(fc.property(anyText, anyJson, (text, json) => {
    for (const [name, read, ok, refused] of [['csv', readObservationCsv, 'csvOk', 'csvRefused'], ['landxml', readLandXml, 'xmlOk', 'xmlRefused']] as const) {
      try {
        const r = read(text)
        if (!readerOk(r)) crash(`${name} reader answered an invalid shape`, text, JSON.stringify(r).slice(0, 120))
        else counts[r.ok ? ok : refused]++
      } catch (e) { crash(`${name} reader threw`, text, e) }
    }
    for (const { name, schema } of all) {
      try { counts[schema.safeParse(json).success ? 'schemaAccepted' : 'schemaRefused']++ } catch (e) { crash(`schema ${name} threw`, json, e) }
    }
    return true
  }), { numRuns: RUNS, seed: SEED })
  const s = (performance.now() - t0) / 1000
  console.log(`fuzz: ${RUNS.toLocaleString('en')} generated inputs (seed ${SEED}), each through both readers and ${all.length} zod schemas from shared/schemas, in ${s.toFixed(1)} s`)
  console.log(`  CSV reader:     ${counts.csvOk} read, ${counts.csvRefused} refused with line numbers`)
  console.log(`  LandXML reader: ${counts.xmlOk} read, ${counts.xmlRefused} refused with line numbers`)
  console.log(`  zod schemas:    ${counts.schemaAccepted} accepted, ${counts.schemaRefused} refused (${all.length * RUNS} parses)`)
  console.log(`  crashes: ${crashes.length}`)
  for (const c of crashes.filter(Boolean)) console.log(`    ${c}`)
  if (crashes.length) process.exitCode = 1
}

main().catch((e) => { console.error(e); process.exitCode = 1 })
