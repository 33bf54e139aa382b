// Reads a multipart upload (RFC 7578) with busboy, streaming, with a byte cap:
// a file over the limit answers 413 without being buffered whole, and the rest
// of the body is drained so the client still receives the answer.
import type { H3Event } from 'h3'
import busboy from 'busboy'
import { DomainError } from './errors'

export interface UploadForm {
  file: { name: string; data: Buffer; type?: string } | null
  fields: Record<string, string>
}

export async function readUploadForm(event: H3Event, maxFileBytes: number, tooLarge: () => DomainError): Promise<UploadForm> {
  const type = getRequestHeader(event, 'content-type') ?? ''
  if (!type.toLowerCase().startsWith('multipart/form-data')) {
    throw new DomainError('unsupported_media', 'Send the file as multipart/form-data with the field `file`')
  }
  const req = event.node.req
  let parser: busboy.Busboy
  try {
    parser = busboy({ headers: req.headers, limits: { fileSize: maxFileBytes, files: 1, fields: 20, fieldSize: 64 * 1024 }, defParamCharset: 'utf8' })
  } catch {
    throw new DomainError('unsupported_media', 'The multipart body has no boundary')
  }
  const fields: Record<string, string> = {}
  let file: UploadForm['file'] = null
  let truncated = false
  await new Promise<void>((resolve, reject) => {
    parser.on('file', (name, stream, info) => {
      const chunks: Buffer[] = []
      stream.on('data', (c: Buffer) => { if (!truncated) chunks.push(c) })
      stream.on('limit', () => { truncated = true; chunks.length = 0 })
      stream.on('end', () => {
        if (name === 'file' && !truncated) {
          file = { name: (info.filename || 'upload').replace(/[\\/]/g, '_'), data: Buffer.concat(chunks), type: info.mimeType }
        }
      })
    })
    parser.on('field', (name, value) => { fields[name] = value })
    parser.on('close', () => resolve())
    parser.on('error', (e: Error) => reject(new DomainError('malformed', `The multipart body could not be read: ${e.message}`)))
    req.pipe(parser)
  })
  if (truncated) throw tooLarge()
  return { file, fields }
}

/** An optional positive integer form field; blank means not given. */
export function formId(fields: Record<string, string>, name: string): number | null {
  const v = (fields[name] ?? '').trim()
  if (v === '' || v === 'null') return null
  if (!/^\d{1,9}$/.test(v)) throw new DomainError('invalid', 'Some fields are not valid', [{ field: name, message: `${name}: must be a positive whole number` }])
  return Number(v)
}
