// Projected coordinate systems offered when a project is created, with their
// proj4 definitions bundled so that Tiepoint works offline. UTM families are
// generated from their defining parameters (zone central meridian 6°·zone − 183°,
// k0 = 0.9996, false easting 500 000 m, false northing 10 000 000 m south:
// NGA.SIG.0012 Universal Grids). The few national grids below were written from
// memory of the EPSG registry entries and are checked in tests against proj4's
// own bundled definitions where proj4 has them.
export interface CrsEntry {
  code: string // 'EPSG:32633'
  name: string
  proj4: string
  unit: 'm' | 'usft' | 'ft'
}

function utm(prefix: number, zone: number, south: boolean, datum: string, ellps: string, towgs: string): CrsEntry {
  return {
    code: `EPSG:${prefix + zone}`,
    name: `${datum} / UTM zone ${zone}${south ? 'S' : 'N'}`,
    proj4: `+proj=utm +zone=${zone}${south ? ' +south' : ''} +${ellps}${towgs} +units=m +no_defs`,
    unit: 'm',
  }
}

const range = (a: number, b: number) => Array.from({ length: b - a + 1 }, (_, i) => a + i)

export const CRS_LIST: CrsEntry[] = [
  ...range(1, 60).map((z) => utm(32600, z, false, 'WGS 84', 'datum=WGS84', '')),
  ...range(1, 60).map((z) => utm(32700, z, true, 'WGS 84', 'datum=WGS84', '')),
  ...range(1, 23).map((z) => utm(26900, z, false, 'NAD83', 'datum=NAD83', '')),
  ...range(28, 38).map((z) => utm(25800, z, false, 'ETRS89', 'ellps=GRS80', ' +towgs84=0,0,0,0,0,0,0')),
  {
    code: 'EPSG:27700', name: 'OSGB36 / British National Grid', unit: 'm',
    proj4: '+proj=tmerc +lat_0=49 +lon_0=-2 +k=0.9996012717 +x_0=400000 +y_0=-100000 +ellps=airy +towgs84=446.448,-125.157,542.06,0.15,0.247,0.842,-20.489 +units=m +no_defs',
  },
  {
    code: 'EPSG:2193', name: 'NZGD2000 / New Zealand Transverse Mercator 2000', unit: 'm',
    proj4: '+proj=tmerc +lat_0=0 +lon_0=173 +k=0.9996 +x_0=1600000 +y_0=10000000 +ellps=GRS80 +towgs84=0,0,0,0,0,0,0 +units=m +no_defs',
  },
  {
    code: 'EPSG:2056', name: 'CH1903+ / LV95', unit: 'm',
    proj4: '+proj=somerc +lat_0=46.9524055555556 +lon_0=7.43958333333333 +k_0=1 +x_0=2600000 +y_0=1200000 +ellps=bessel +towgs84=674.374,15.056,405.346,0,0,0,0 +units=m +no_defs',
  },
  {
    code: 'EPSG:2229', name: 'NAD83 / California zone 5 (ftUS)', unit: 'usft',
    proj4: '+proj=lcc +lat_0=33.5 +lon_0=-118 +lat_1=35.4666666666667 +lat_2=34.0333333333333 +x_0=2000000.0001016 +y_0=500000.0001016 +ellps=GRS80 +towgs84=0,0,0,0,0,0,0 +units=us-ft +no_defs',
  },
  {
    code: 'EPSG:2263', name: 'NAD83 / New York Long Island (ftUS)', unit: 'usft',
    proj4: '+proj=lcc +lat_0=40.1666666666667 +lon_0=-74 +lat_1=41.0333333333333 +lat_2=40.6666666666667 +x_0=300000 +y_0=0 +ellps=GRS80 +towgs84=0,0,0,0,0,0,0 +units=us-ft +no_defs',
  },
]

const byCode = new Map(CRS_LIST.map((c) => [c.code, c]))

export function findCrs(code: string): CrsEntry | undefined {
  return byCode.get(code.toUpperCase())
}

export function searchCrs(query: string, limit = 30): CrsEntry[] {
  const q = query.trim().toLowerCase()
  if (!q) return CRS_LIST.slice(0, limit)
  return CRS_LIST.filter((c) => c.code.toLowerCase().includes(q) || c.name.toLowerCase().includes(q)).slice(0, limit)
}
