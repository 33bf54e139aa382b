// Caps every JSON or urlencoded request body at 1 MB before anything parses
// it, including routes the route helper does not wrap (the next-auth sign-in
// routes). Multipart uploads are left to their own streaming cap.
import { JSON_BODY_LIMIT, isMultipart, readCappedBody } from '../utils/body'
import { sendApiError } from '../utils/api'

const PAYLOAD = new Set(['POST', 'PUT', 'PATCH', 'DELETE'])

export default defineEventHandler(async (event) => {
  if (!PAYLOAD.has(event.method.toUpperCase()) || !event.path.startsWith('/api/') || isMultipart(event)) return
  try {
    await readCappedBody(event, JSON_BODY_LIMIT)
  } catch (error) {
    return sendApiError(event, error)
  }
})
