// Import benchmark: how fast the observation readers parse big uploads and how
// much memory they need. Prints figures; never fails on timing (targets are
// read by a person: 100,000 CSV lines well under 10 s including storage, and
// peak resident memory under 300 MB).
//
//   npx tsx tests/bench/import.ts        (or npm run bench)
//
// The files are generated in memory from an invented network of 200 stations.

import { readObservationCsv, readObservationCsvBatches } from '../../server/engine/io/csv'
import type { RecordBatches } from '../../server/engine/types'
import { readLandXml, readLandXmlBatches } from '../../server/engine/io/landxml'

const CSV_LINES = 100_000
const XML_TARGET_BYTES = 10 * 1024 * 1024

// A fixed linear congruential sequence keeps runs comparable.
let state = 12345
const rand = () => ((state = (Math.imul(state, 1103515245) + 12345) >>> 0) / 4294967296)

const station = () => `S${Math.floor(rand() * 200)}`
const dms = () => `${Math.floor(rand() * 360)} ${String(Math.floor(rand() * 60)).padStart(2, '0')} ${(rand() * 59.9).toFixed(1)}`

function makeCsv(): string {
  const rows = ['# benchmark file', 'kind,at,from,to,value,unit,sigma,hi,ht,set,length,note']
  while (rows.length < CSV_LINES) {
    const at = station()
    let to = station()
    if (to === at) to = `${to}x`
    const pick = rand()
    if (pick < 0.4) rows.push(`direction,${at},,${to},${dms()},dms,,,,${at}-1,,`)
    else if (pick < 0.6) rows.push(`zenith,${at},,${to},${90 + Math.floor(rand() * 4)} 12 33.4,dms,,1.550,1.600,,,`)
    else if (pick < 0.85) rows.push(`slope_distance,${at},,${to},${(50 + rand() * 900).toFixed(4)},m,,1.550,1.600,,,`)
    else if (pick < 0.95) rows.push(`height_difference,${at},,${to},${(rand() * 10 - 5).toFixed(5)},m,,,,,0.350,`)
    else rows.push(`angle,${at},${station()}b,${to},${dms()},dms,3,,,,,"note, quoted"`)
  }
  return rows.join('\n') + '\n'
}

function makeXml(): string {
  const parts: string[] = [
    '<?xml version="1.0" encoding="UTF-8"?>',
    '<LandXML xmlns="http://www.landxml.org/schema/LandXML-1.2" version="1.2">',
    '<Units><Metric linearUnit="meter" angularUnit="decimal degrees"/></Units>',
    '<CgPoints><CgPoint name="S0" pntSurv="control">5000.000 1000.000 50.000</CgPoint></CgPoints>',
    '<Survey>',
  ]
  let bytes = parts.join('\n').length
  let setup = 0
  while (bytes < XML_TARGET_BYTES) {
    const at = station()
    const obs: string[] = []
    for (let k = 0; k < 20; k++) {
      const to = `${station()}t`
      obs.push(
        `<RawObservation horizAngle="${(rand() * 359.9).toFixed(6)}" zenithAngle="${(88 + rand() * 4).toFixed(6)}" slopeDistance="${(50 + rand() * 900).toFixed(4)}" targetHeight="1.600"><TargetPoint pntRef="${to}"/></RawObservation>`,
      )
    }
    const block = `<InstrumentSetup id="U${++setup}" stationName="${at}" instrumentHeight="1.550"><InstrumentPoint pntRef="${at}"/>\n${obs.join('\n')}\n</InstrumentSetup>`
    parts.push(block)
    bytes += block.length + 1
  }
  parts.push('</Survey>', '</LandXML>')
  return parts.join('\n')
}

const mb = (bytes: number) => (bytes / 1024 / 1024).toFixed(1)
const gc = (globalThis as { gc?: () => void }).gc

function run(label: string, text: string, read: (t: string) => { ok: boolean }, count: (r: unknown) => number) {
  gc?.()
  const t0 = performance.now()
  const r = read(text)
  const seconds = (performance.now() - t0) / 1000
  if (!r.ok) throw new Error(`${label}: the generated file did not read: ${JSON.stringify((r as { errors?: unknown[] }).errors?.slice(0, 3))}`)
  const lines = text.split('\n').length
  const records = count(r)
  console.log(
    `${label}: ${lines.toLocaleString('en')} lines, ${mb(text.length)} MB, ${records.toLocaleString('en')} records in ${seconds.toFixed(2)} s` +
      ` → ${Math.round(lines / seconds).toLocaleString('en')} lines/s, ${Math.round(records / seconds).toLocaleString('en')} records/s;` +
      ` peak RSS so far ${(process.resourceUsage().maxRSS / 1024).toFixed(0)} MB`,
  )
}

const observations = (r: unknown) => (r as { observations: unknown[] }).observations.length

/** The upload's way: the file read in batches (first, while the process's peak is still its own). */
function batched(label: string, size: number, it: RecordBatches) {
  gc?.()
  const before = process.resourceUsage().maxRSS / 1024
  const t0 = performance.now()
  let records = 0
  let batches = 0
  for (let step = it.next(); ; step = it.next()) {
    if (step.done) {
      if (!step.value.ok) throw new Error(`${label}: the generated file did not read`)
      break
    }
    records += step.value.length
    batches++
  }
  const seconds = (performance.now() - t0) / 1000
  const after = process.resourceUsage().maxRSS / 1024
  console.log(`${label} (as uploads read it): ${mb(size)} MB, ${records.toLocaleString('en')} records in ${batches} batches in ${seconds.toFixed(2)} s;` +
    ` peak RSS ${before.toFixed(0)} → ${after.toFixed(0)} MB (+${(after - before).toFixed(0)} MB while reading)`)
}

console.log(`node ${process.version}, start RSS ${mb(process.memoryUsage().rss)} MB`)
const xml = makeXml()
const xmlBytes = new TextEncoder().encode(xml)
batched('LandXML in batches from bytes', xmlBytes.length, readLandXmlBatches(xmlBytes))
const csv = makeCsv()
batched('CSV in batches', csv.length, readObservationCsvBatches(csv))
run('CSV, whole text at once', csv, (t) => readObservationCsv(t), observations)
run('LandXML, whole text at once', xml, (t) => readLandXml(t), observations)
console.log('targets: 100,000 CSV lines well under 10 s including storage; peak RSS < 300 MB')
