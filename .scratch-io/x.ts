import { readLandXml } from '../server/engine/io/landxml'
const x = `<?xml version="1.0" encoding="UTF-8"?>
<LandXML xmlns="http://www.landxml.org/schema/LandXML-1.2" version="1.2" date="2026-01-01" time="10:00:00">
  <Units><Metric linearUnit="meter" areaUnit="squareMeter" volumeUnit="cubicMeter" angularUnit="decimal dd.mm.ss" directionUnit="decimal dd.mm.ss"/></Units>
  <CgPoints>
    <CgPoint name="A" pntSurv="control">5000.000 1000.000 50.000</CgPoint>
    <CgPoint name="B">5100 1100</CgPoint>
  </CgPoints>
  <Survey>
    <SurveyHeader name="x"/>
    <InstrumentSetup id="s1" stationName="A" instrumentHeight="1.55">
      <InstrumentPoint pntRef="A"/>
      <RawObservation horizAngle="123.4506" zenithAngle="90.1000" slopeDistance="141.4214" targetHeight="1.6">
        <TargetPoint pntRef="B"/>
      </RawObservation>
      <Foo/>
    </InstrumentSetup>
  </Survey>
  <Bar/>
</LandXML>`
console.log(JSON.stringify(readLandXml(x), null, 1))
console.log(JSON.stringify(readLandXml('<LandXML><Units><Metric linearUnit="furlong" angularUnit="x"/></Units></LandXML>')))
console.log(JSON.stringify(readLandXml('<a><b></a>')))
