// The engine bench's perturbed grid as a Tiepoint observation CSV, for the
// benchmarks that go through the upload route (api.ts, big-run.ts). Invented
// data: the grid is made by tests/unit/engine/helpers.ts from a seeded random
// generator, not by the engine.
import { gridNetwork } from '../unit/engine/helpers'

const DEG = 180 / Math.PI

/** The engine bench's perturbed grid (≈ 6 neighbours, a direction and a distance to each, 4 fixed corners) as a Tiepoint CSV. */
export function networkCsv(stations: number): { csv: string; stations: number; observations: number } {
  const side = Math.round(Math.sqrt(stations))
  const net = gridNetwork(side, 1)
  const rows = ['kind,at,from,to,value,unit,sigma,hi,ht,set,length,note']
  for (const c of net.controls) rows.push(`control,${c.station},,,${c.east!.toFixed(4)} ${c.north!.toFixed(4)},m,,,,,,`)
  for (const o of net.observations) {
    if (o.kind === 'direction') rows.push(`direction,${o.at},,${o.to},${(o.value * DEG).toFixed(8)},deg,${(o.sigma! * DEG * 3600).toFixed(3)},,,${o.at}-1,,`)
    else rows.push(`horizontal_distance,${o.at},,${o.to},${o.value.toFixed(5)},m,${(o.sigma! * 1000).toFixed(3)},,,,,`)
  }
  return { csv: rows.join('\n') + '\n', stations: side * side, observations: net.observations.length }
}

