// Request bodies with a byte cap. Every JSON or urlencoded body is read here,
// counting bytes as they arrive (chunked bodies included), and refused with
// 413 once it passes the cap — before anything parses it. The bytes are then
// handed to h3, so next-auth and readBody see the same, already-capped body.
// Multipart uploads are not read here: server/utils/upload.ts streams them
// with their own, larger cap.
import type { H3Event } from 'h3'
import { getRequestHeader } from 'h3'
import { DomainError, invalid, tooLarge } from './errors'

export const JSON_BODY_LIMIT = 1024 * 1024
const RAW_BODY = Symbol.for('h3RawBody')

const capMessage = (limit: number) => `The request body is larger than ${Math.round(limit / 1024)} KB; send less at a time`

export const isMultipart = (event: H3Event) =>
  (getRequestHeader(event, 'content-type') ?? '').toLowerCase().startsWith('multipart/form-data')

/** The raw body, at most `limit` bytes; undefined when there is none. */
export async function readCappedBody(event: H3Event, limit = JSON_BODY_LIMIT): Promise<Buffer | undefined> {
  const cached = event.context.tiepointBody as Buffer | null | undefined
  if (cached !== undefined) return cached ?? undefined
  const req = event.node.req
  const declared = Number.parseInt(req.headers['content-length'] ?? '', 10)
  const chunked = /\bchunked\b/i.test(String(req.headers['transfer-encoding'] ?? ''))
  if (Number.isFinite(declared) && declared > limit) {
    discard(event)
    throw tooLarge(capMessage(limit))
  }
  if (!(declared > 0) && !chunked) {
    event.context.tiepointBody = null
    return undefined
  }
  const body = await new Promise<Buffer>((resolve, reject) => {
    const chunks: Buffer[] = []
    let size = 0
    const onData = (chunk: Buffer) => {
      size += chunk.length
      if (size > limit) {
        cleanup()
        chunks.length = 0
        discard(event)
        reject(tooLarge(capMessage(limit)))
        return
      }
      chunks.push(chunk)
    }
    const onEnd = () => { cleanup(); resolve(Buffer.concat(chunks)) }
    const onError = (e: Error) => { cleanup(); reject(new DomainError('malformed', `The request body could not be read: ${e.message}`)) }
    const cleanup = () => { req.off('data', onData); req.off('end', onEnd); req.off('error', onError) }
    req.on('data', onData).on('end', onEnd).on('error', onError)
  })
  event.context.tiepointBody = body
  ;(req as unknown as Record<symbol, unknown>)[RAW_BODY] = Promise.resolve(body)
  return body
}

/**
 * Stop keeping an over-large body: the rest is read and thrown away, so the
 * client, still sending, receives the 413 instead of a broken connection.
 * Nothing is stored; the server's request timeout bounds how long this lasts.
 */
function discard(event: H3Event) {
  event.node.req.resume()
}

/** Reads a JSON body: only `application/json`; malformed JSON 400; NUL or broken text 422 naming the field. */
export async function readJsonBody(event: H3Event): Promise<unknown> {
  const raw = await readCappedBody(event)
  if (!raw || raw.length === 0) return {}
  const type = (getRequestHeader(event, 'content-type') ?? '').toLowerCase().split(';')[0]!.trim()
  if (type !== 'application/json') {
    throw new DomainError('unsupported_media', 'Send the body as JSON with Content-Type: application/json')
  }
  let parsed: unknown
  try {
    parsed = JSON.parse(raw.toString('utf8'))
  } catch {
    throw new DomainError('malformed', 'The request body is not valid JSON')
  }
  const bad = badText(parsed)
  if (bad.length) throw invalid('Some text fields hold characters that cannot be stored', bad)
  return parsed
}

/**
 * Text PostgreSQL cannot store (NUL) or that is not valid UTF-16 (a lone
 * surrogate, which JSON's \ud800 escapes can produce) would otherwise fail
 * deep in a query with a 500. Found here, it names the field instead.
 */
export function badText(value: unknown, path: string[] = [], out: { field: string; message: string }[] = []) {
  if (out.length >= 20) return out
  if (typeof value === 'string') {
    // eslint-disable-next-line no-control-regex
    const nul = value.includes('\u0000')
    const lone = /[\ud800-\udbff](?![\udc00-\udfff])|(?<![\ud800-\udbff])[\udc00-\udfff]/.test(value)
    if (nul || lone) {
      const field = path.join('.') || '(body)'
      out.push({ field, message: `${field}: ${nul ? 'contains a NUL character' : 'contains a broken character (unpaired surrogate)'}` })
    }
  } else if (Array.isArray(value)) {
    value.forEach((v, i) => badText(v, [...path, String(i)], out))
  } else if (value && typeof value === 'object') {
    for (const [k, v] of Object.entries(value)) {
      if (badText(k, [], []).length) out.push({ field: path.join('.') || '(body)', message: `${path.join('.') || 'body'}: a key contains a NUL or broken character` })
      badText(v, [...path, k], out)
    }
  }
  return out
}
