// GET /api/health — 200 only when the database answers.
import { sql } from 'drizzle-orm'

export default defineEventHandler(async (event) => {
  try {
    await useDb().execute(sql`select 1`)
    return { ok: true, db: true }
  } catch {
    setResponseStatus(event, 503)
    return { ok: false, db: false }
  }
})
