// σ + U+0302 (combining circumflex) lands beside the σ in the fonts we ship, so
// a template draws σ̂ with <SigmaHat>/<MathText>, and where only text fits (an
// <option>, title=, aria-label, placeholder) the estimate is named in words.
// This reads every page and component template and refuses a literal U+0302.
import { readdirSync, readFileSync } from 'node:fs'
import { join } from 'node:path'
import { describe, expect, it } from 'vitest'

const HAT = '\u0302'

function vueFiles(dir: string): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap((e) =>
    e.isDirectory() ? vueFiles(join(dir, e.name)) : e.name.endsWith('.vue') ? [join(dir, e.name)] : [])
}

/** the <template> part of a single-file component, comments removed */
function templateOf(source: string): string {
  const start = source.indexOf('<template>')
  const end = source.lastIndexOf('</template>')
  return start < 0 || end < 0 ? '' : source.slice(start, end).replace(/<!--[\s\S]*?-->/g, '')
}

describe('no combining circumflex in a template', () => {
  it('the check itself finds one in an <option> and a title', () => {
    expect(templateOf(`<template><select><option>σ${HAT}0</option></select></template>`)).toContain(HAT)
    expect(templateOf(`<template><dd title="σ${HAT}0 = 1">x</dd></template>`)).toContain(HAT)
    expect(templateOf(`<template><!-- σ${HAT}0 in a comment --><p /></template>`)).not.toContain(HAT)
  })

  const files = [...vueFiles('pages'), ...vueFiles('components'), ...vueFiles('layouts'), 'app.vue']
  it.each(files)('%s', (file) => {
    const lines = templateOf(readFileSync(file, 'utf8')).split('\n').filter((l) => l.includes(HAT))
    expect(lines).toEqual([])
  })
})
