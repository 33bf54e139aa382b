// One palette for verdicts, map and histogram (shared/palette.ts): the words
// are legible, the Tailwind tokens are the palette's own values, and no
// component paints with a colour of its own.
import { readdirSync, readFileSync, statSync } from 'node:fs'
import { join } from 'node:path'
import { describe, expect, it } from 'vitest'
import tailwind from '../../tailwind.config'
import { CHART, GRAPHIC, VERDICT } from '../../shared/palette'

/** Relative luminance and contrast ratio as defined by WCAG 2.1 (W3C Recommendation, 2018), §1.4.3 and its glossary. */
function luminance(hex: string): number {
  const [r, g, b] = [1, 3, 5].map((i) => parseInt(hex.slice(i, i + 2), 16) / 255)
    .map((c) => (c <= 0.03928 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4))
  return 0.2126 * r! + 0.7152 * g! + 0.0722 * b!
}
function contrast(a: string, b: string): number {
  const [hi, lo] = [luminance(a), luminance(b)].sort((x, y) => y - x)
  return (hi! + 0.05) / (lo! + 0.05)
}

describe('verdict colours', () => {
  // WCAG 2.1 success criterion 1.4.3: at least 4.5:1 for normal-size text.
  it('contrast: black on white is 21:1 and white on white 1:1 (WCAG 2.1 definition)', () => {
    expect(contrast('#000000', '#ffffff')).toBeCloseTo(21, 6)
    expect(contrast('#ffffff', '#ffffff')).toBeCloseTo(1, 6)
  })
  for (const v of ['pass', 'watch', 'fail'] as const) {
    it(`${v}: the word reaches 4.5:1 on white and on its own tint (WCAG 2.1 §1.4.3)`, () => {
      expect(contrast(VERDICT[v], '#ffffff')).toBeGreaterThanOrEqual(4.5)
      expect(contrast(VERDICT[v], VERDICT[`${v}Bg`])).toBeGreaterThanOrEqual(4.5)
    })
  }
  it('the graphic shades are the Okabe–Ito hues blue, orange and vermilion (Okabe & Ito 2008)', () => {
    expect(GRAPHIC).toEqual({ pass: '#0072B2', watch: '#E69F00', fail: '#D55E00' })
  })
  it('map lines and histogram bars use the graphic shades of the verdicts', () => {
    expect([CHART.lineWatch, CHART.lineFail]).toEqual([GRAPHIC.watch, GRAPHIC.fail])
    expect([CHART.binPass, CHART.binWatch, CHART.binFail]).toEqual([GRAPHIC.pass, GRAPHIC.watch, GRAPHIC.fail])
  })
  it('the Tailwind verdict tokens are the palette’s values', () => {
    const colors = (tailwind.theme?.extend?.colors ?? {}) as Record<string, Record<string, string>>
    expect(colors.verdict).toEqual({
      pass: VERDICT.pass, 'pass-bg': VERDICT.passBg, watch: VERDICT.watch, 'watch-bg': VERDICT.watchBg, fail: VERDICT.fail, 'fail-bg': VERDICT.failBg,
    })
  })
})

describe('no colour of its own in the Vue app', () => {
  const root = join(__dirname, '../..')
  const files = (dir: string): string[] => readdirSync(join(root, dir)).flatMap((f) => {
    const rel = join(dir, f)
    return statSync(join(root, rel)).isDirectory() ? files(rel) : /\.(vue|ts)$/.test(f) ? [rel] : []
  })
  it('components, pages, layouts, composables and the PDF maker name colours through Tailwind tokens or shared/palette.ts, never as hex or rgba literals', () => {
    const offenders = [...['components', 'pages', 'layouts', 'composables'].flatMap(files), 'server/services/deliverables.ts']
      .flatMap((f) => [...readFileSync(join(root, f), 'utf8').matchAll(/#[0-9a-fA-F]{6}\b|#[0-9a-fA-F]{3}\b(?![\w-])|rgba?\(\s*\d/g)].map((m) => `${f}: ${m[0]}`))
      .filter((x) => !/#fff$/i.test(x))
    expect(offenders).toEqual([])
  })
})
