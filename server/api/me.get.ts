// GET /api/me — the user, the firms and the role in each
import { eq } from 'drizzle-orm'
import { firms, memberships } from '../db/schema'

export default defineApiHandler(async (event) => {
  const user = await requireUser(event)
  const rows = await useDb().select({ slug: firms.slug, name: firms.name, role: memberships.role })
    .from(memberships).innerJoin(firms, eq(firms.id, memberships.firmId))
    .where(eq(memberships.userId, user.id)).orderBy(firms.name)
  return {
    user: { id: user.id, email: user.email, name: user.name, licenceNumber: user.licenceNumber, licenceJurisdiction: user.licenceJurisdiction },
    firms: rows,
  }
})
