// useApiForm: the API's one error shape `{ statusCode, message, errors?: [{ field?, message }] }`
// (server/utils/api.ts) read into messages beside fields, and the schema check before sending.
import { describe, expect, it } from 'vitest'
import { apiMessage, fieldErrorsOf, useApiForm } from '../../composables/useApiForm'
import { toleranceCreateSchema } from '../../shared/schemas/tolerance'

/** what ofetch throws for a 422 answer */
const fetchError = (data: unknown) => Object.assign(new Error('422'), { statusCode: 422, data })

describe('reading the API error shape', () => {
  it('puts each message beside its field without the "field: " prefix, and the top field too', () => {
    const { fields, rest } = fieldErrorsOf([
      { field: 'name', message: 'name: is already used' },
      { field: 'holds.2.sdEastMm', message: 'holds.2.sdEastMm: Too big' },
      { message: 'Station KF99 is not in this project' },
    ])
    expect(fields).toEqual({ name: 'is already used', 'holds.2.sdEastMm': 'Too big', holds: 'Too big' })
    expect(rest).toEqual(['Station KF99 is not in this project'])
  })

  it('a remove action shows the server message, or the fallback when there is none', () => {
    expect(apiMessage(fetchError({ statusCode: 409, message: "Station 'CP1' is used by 34 observations" }), 'Could not delete.')).toBe("Station 'CP1' is used by 34 observations")
    expect(apiMessage(fetchError({ statusCode: 422, message: 'Some fields are not valid', errors: [{ field: 'name', message: 'name: is required' }] }), 'x')).toBe('name: is required')
    expect(apiMessage(new TypeError('Failed to fetch'), 'Could not delete.')).toBe('Could not delete.')
  })
})

describe('useApiForm', () => {
  it('refuses values the schema refuses, naming the field, and sends nothing', async () => {
    const f = useApiForm(toleranceCreateSchema)
    let sent = 0
    const out = await f.submit({ kind: 'custom', name: 'Rule', mm: 5, ppm: 10, source: ' ' }, async () => { sent++; return 1 })
    expect(out).toBeUndefined()
    expect(sent).toBe(0)
    expect(f.err('source')).toBe('is required: say where the rule comes from')
    expect(f.pending.value).toBe(false)
  })

  it('sends the parsed body, and places a server 409 beside its field', async () => {
    const f = useApiForm(toleranceCreateSchema)
    let body: unknown = null
    const out = await f.submit({ kind: 'custom', name: '  Rule  ', mm: 5, ppm: 10, source: 'Contract 12' }, async (b) => {
      body = b
      expect(f.pending.value).toBe(true)
      throw fetchError({ statusCode: 409, message: "A tolerance profile named 'Rule' already exists", errors: [{ field: 'name', message: 'name: is already used' }] })
    })
    expect(out).toBeUndefined()
    // the schema trims the name before it is sent
    expect(body).toMatchObject({ name: 'Rule', mm: 5 })
    expect(f.err('name')).toBe('is already used')
    expect(f.problem.value).toBe("A tolerance profile named 'Rule' already exists")
    expect(f.pending.value).toBe(false)
  })
})
