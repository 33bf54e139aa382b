// Every page needs a signed-in person except sign-in, invitations and password reset.
import { useSessionStore } from '~~/stores/session'

const PUBLIC = [/^\/signin$/, /^\/forgot$/, /^\/invite\//, /^\/reset\//]

export default defineNuxtRouteMiddleware(async (to) => {
  if (PUBLIC.some((p) => p.test(to.path))) return
  const session = useSessionStore()
  const me = await session.load()
  if (!me) return navigateTo({ path: '/signin', query: to.fullPath !== '/' ? { next: to.fullPath } : {} })
})
