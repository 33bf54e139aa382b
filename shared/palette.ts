// Tiepoint's colours, in one place for the Tailwind tokens (tailwind.config.ts)
// and for what Tailwind cannot reach: the map canvas and the histogram.
//
// Test results use a colour-blind-safe scale built on the Okabe–Ito hues
// (Okabe & Ito 2008, "Color Universal Design"): blue = pass, orange/amber =
// watch, vermilion = fail. Each verdict has two shades of its hue:
// - VERDICT: words and icons on white or on the verdict's own tint; darkened
//   where Okabe–Ito's hue is too light for text, so each reaches the WCAG 2.1
//   contrast minimum of 4.5:1 for normal text (tests/unit/palette.test.ts);
// - GRAPHIC: Okabe–Ito's own hues for lines and bars, which keep the verdicts
//   apart in lightness as well as hue for readers with a colour deficiency.
// Every use pairs the colour with a word, an icon or a line pattern, so
// nothing depends on colour alone.

export const VERDICT = {
  pass: '#0072B2', passBg: '#e6f1f8',
  watch: '#8F6400', watchBg: '#fdf3dc',
  fail: '#B04D00', failBg: '#fbebe0',
} as const

export const GRAPHIC = { pass: '#0072B2', watch: '#E69F00', fail: '#D55E00' } as const

/** The brand colour, a deep teal we call "tide". */
export const TIDE = {
  50: '#effaf9', 100: '#d6f1ee', 200: '#aee2dd', 300: '#7ccbc5', 400: '#4aaea9',
  500: '#2f918d', 600: '#237473', 700: '#1f5d5d', 800: '#1c4b4c', 900: '#193f40',
} as const

/** Neutral slate tones used on canvases and in the PDF (Tailwind's slate scale). */
export const SLATE = { 200: '#e2e8f0', 300: '#cbd5e1', 400: '#94a3b8', 500: '#64748b', 600: '#475569', 700: '#334155', 900: '#0f172a' } as const

/**
 * The network map and the histogram of w. Observation lines carry the verdict
 * scale, with a neutral tone for passing lines so the few that matter stand
 * out (the legend names each); stations are told apart by fill and outline,
 * in neutral and brand tones that no verdict uses.
 */
export const CHART = {
  linePass: SLATE[500],
  lineWatch: GRAPHIC.watch,
  lineFail: GRAPHIC.fail,
  control: SLATE[900],
  newStation: TIDE[700],
  /** GNSS baseline vectors: a violet no verdict uses */
  vector: '#6d28d9',
  /** the band drawn under a vector's line on the map, and its legend swatch */
  vectorBand: 'rgba(109, 40, 217, 0.35)',
  highlight: TIDE[500],
  /** the fill of error ellipses on the map (the brand teal, faint) */
  ellipseFill: 'rgba(15, 92, 99, 0.12)',
  /** the white halo behind station names on the map */
  labelHalo: 'rgba(255, 255, 255, 0.9)',
  grid: SLATE[200],
  /** the map's background and the fill of stations not held */
  paper: '#ffffff',
  scaleBar: SLATE[900],
  curve: SLATE[700],
  /** histogram bars: within ±2, between 2 and the critical value, beyond it */
  binPass: GRAPHIC.pass,
  binWatch: GRAPHIC.watch,
  binFail: GRAPHIC.fail,
} as const
