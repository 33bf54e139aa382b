// Regression: the run page went back to useFetch<any>, and a renamed field
// then showed as blank instead of failing the type check. Every page and
// component names the DTO it fetches (shared/types).
import { readdirSync, readFileSync, statSync } from 'node:fs'
import { join } from 'node:path'
import { expect, it } from 'vitest'

const root = join(__dirname, '../..')
const files = (dir: string): string[] => readdirSync(join(root, dir)).flatMap((f) => {
  const rel = join(dir, f)
  return statSync(join(root, rel)).isDirectory() ? files(rel) : /\.(vue|ts)$/.test(f) ? [rel] : []
})

it('no page, layout, component or composable fetches into any', () => {
  const untyped = ['pages', 'layouts', 'components', 'composables', 'stores'].flatMap(files)
    .flatMap((f) => [...readFileSync(join(root, f), 'utf8').matchAll(/\b(useFetch|useLazyFetch|\$fetch|fetcher|useAsyncData)<\s*any\b/g)].map((m) => `${f}: ${m[0]}`))
  expect(untyped).toEqual([])
})
