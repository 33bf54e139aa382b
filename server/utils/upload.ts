// Reads a multipart upload with a byte cap: the body is counted as it
// arrives, and a file over the limit answers 413 without being buffered
// (the rest is drained so the client still receives the answer).
import type { H3Event } from 'h3'
import { ApiError } from './api'

export interface UploadForm {
  file: { name: string; data: Buffer; type?: string } | null
  fields: Record<string, string>
}

/** Room for multipart boundaries and the small text fields beside the file. */
const FORM_OVERHEAD = 1024 * 1024
/** Past this much, stop draining and drop the connection. */
const HARD_CAP = 256 * 1024 * 1024

export async function readUploadForm(event: H3Event, maxFileBytes: number, tooLarge: () => ApiError): Promise<UploadForm> {
  const type = getRequestHeader(event, 'content-type') ?? ''
  if (!type.toLowerCase().startsWith('multipart/form-data')) {
    throw new ApiError(415, 'Send the file as multipart/form-data with the field `file`')
  }
  const cap = maxFileBytes + FORM_OVERHEAD
  const req = event.node.req
  const chunks: Buffer[] = []
  let total = 0
  await new Promise<void>((resolve, reject) => {
    req.on('data', (chunk: Buffer) => {
      total += chunk.length
      if (total <= cap) chunks.push(chunk)
      else if (total > HARD_CAP) req.destroy()
    })
    req.on('end', () => resolve())
    req.on('close', () => resolve())
    req.on('error', reject)
  })
  if (total > cap) throw tooLarge()
  ;(event as unknown as { _requestBody: Buffer })._requestBody = Buffer.concat(chunks)
  const parts = (await readMultipartFormData(event)) ?? []
  const fields: Record<string, string> = {}
  let file: UploadForm['file'] = null
  for (const p of parts) {
    if (p.name === 'file' && p.filename !== undefined) {
      if (p.data.length > maxFileBytes) throw tooLarge()
      file = { name: p.filename || 'upload', data: p.data, type: p.type }
    } else if (p.name) {
      fields[p.name] = p.data.toString('utf8')
    }
  }
  return { file, fields }
}

/** An optional positive integer form field; blank means not given. */
export function formId(fields: Record<string, string>, name: string): number | null {
  const v = (fields[name] ?? '').trim()
  if (v === '' || v === 'null') return null
  if (!/^\d{1,9}$/.test(v)) throw new ApiError(422, 'Some fields are not valid', [{ field: name, message: `${name}: must be a positive whole number` }])
  return Number(v)
}
