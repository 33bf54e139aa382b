import { XMLParser, XMLValidator } from 'fast-xml-parser'
const x = `<?xml version="1.0"?>\r\n<LandXML a="1">\r\n <Units><Metric linearUnit="meter"/></Units>\n <CgPoints><CgPoint name="A">1 2 3</CgPoint><!-- c --><CgPoint name="B" pntSurv="control">4 5</CgPoint></CgPoints>\n</LandXML>`
const p = new XMLParser({ preserveOrder: true, ignoreAttributes: false, attributeNamePrefix: '', captureMetaData: true, parseTagValue: false, parseAttributeValue: false, processEntities: true })
const o = p.parse(x)
const S = XMLParser.getMetaDataSymbol()
console.log(JSON.stringify(o, null, 1))
function walk(n, d){ for (const c of n){ const k=Object.keys(c).find(k=>k!==':@'); console.log(d, k, c[S], c[':@']); if(Array.isArray(c[k])) walk(c[k], d+' ') } }
walk(o,'')
console.log(XMLValidator.validate('<a><b></a>'), XMLValidator.validate('\u0000\u00ff<'))
