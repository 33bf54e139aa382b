// An invented LandXML 1.2 file of about `targetBytes` (instrument setups of
// eight raw observations each over 500 stations), for the upload benchmarks
// (store.ts through the service, big-run.ts through the route).
export function xmlText(targetBytes: number): string {
  const parts = ['<?xml version="1.0" encoding="UTF-8"?>', '<LandXML xmlns="http://www.landxml.org/schema/LandXML-1.2" version="1.2">',
    '<Units><Metric linearUnit="meter" angularUnit="decimal degrees" directionUnit="decimal degrees"/></Units>',
    '<CgPoints><CgPoint name="S0" pntSurv="control">5000.000 1000.000</CgPoint></CgPoints>', '<Survey>']
  let size = parts.join('\n').length
  for (let s = 0; size < targetBytes; s++) {
    const setup = [`<InstrumentSetup id="SET${s}" stationName="S${s % 500}" instrumentHeight="1.550">`, `<InstrumentPoint pntRef="S${s % 500}"/>`]
    for (let k = 1; k <= 8; k++) {
      setup.push(`<RawObservation horizAngle="${((s * 13 + k * 41) % 360) + 0.1234567}" zenithAngle="${88 + (k % 4) + 0.25}" slopeDistance="${(150 + k * 11 + (s % 50)).toFixed(4)}" targetHeight="1.600"><TargetPoint pntRef="S${(s + k) % 500 === s % 500 ? (s + k + 1) % 500 : (s + k) % 500}"/></RawObservation>`)
    }
    setup.push('</InstrumentSetup>')
    const chunk = setup.join('\n')
    parts.push(chunk)
    size += chunk.length + 1
  }
  parts.push('</Survey>', '</LandXML>')
  return parts.join('\n') + '\n'
}
