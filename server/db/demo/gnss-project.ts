// The second demo project's settings (invented): its name, projected CRS and
// geoid separation, shared by the seed and by the generator of its file
// (./generate-gnss.ts). Kept apart from the generator so the seed does not load
// the generator's test-side tools.
export const GNSS_DEMO = {
  name: 'Wenlow Sound outfall (GNSS + traverse)',
  crs: 'EPSG:25833',
  /** one geoid separation for the site (invented, of the size found in central Europe) */
  geoidSeparationM: 44.87,
  file: 'demo-gnss.csv',
  description: 'Invented demo of a combined network: three GNSS pillars (W01 held, W02 and W03 by their vectors) '
    + 'and a four-station total-station traverse T1–T4 tied to W01 and W03. Vectors carry their own σ and correlations; '
    + 'the run report lists each vector with its test, and the map draws vectors apart from total-station lines.',
} as const
