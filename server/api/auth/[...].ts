// /api/auth/* — sign-in with e-mail and password (next-auth credentials, JWT sessions).
// The session token carries the user id, the person's session version (raised
// by a password change or reset, which ends older sessions) and the sign-in
// time, from which a session ends 12 hours later however active it was
// (server/utils/guard.ts checks both on every request).
import CredentialsProvider from 'next-auth/providers/credentials'
import { NuxtAuthHandler } from '#auth'
import { checkCredentials } from '../../services/signin'
import { SESSION_HOURS } from '../../utils/session'
import { servedOverHttps } from '../../utils/request'

// next-auth ships CommonJS; the default export needs unwrapping under ESM.
const Credentials = ((CredentialsProvider as unknown as { default?: typeof CredentialsProvider }).default ?? CredentialsProvider)

export default NuxtAuthHandler({
  secret: useRuntimeConfig().authSecret || process.env.AUTH_SECRET,
  session: { strategy: 'jwt', maxAge: SESSION_HOURS * 60 * 60 },
  // Secure (and __Secure- prefixed) cookies whenever the app is served over https.
  useSecureCookies: servedOverHttps(),
  pages: { signIn: '/signin', error: '/signin' },
  providers: [
    Credentials({
      name: 'E-mail and password',
      credentials: {
        email: { label: 'E-mail', type: 'email' },
        password: { label: 'Password', type: 'password' },
      },
      async authorize(credentials, req) {
        if (!credentials?.email || !credentials.password) return null
        const headers = (req?.headers ?? {}) as Record<string, string | undefined>
        // set by server/middleware/10.signin-throttle.ts from the socket (or a trusted proxy), never by the client
        const ip = headers['x-tiepoint-client-ip'] ?? 'unknown'
        const user = await checkCredentials(credentials.email, credentials.password, ip)
        return user ? { id: String(user.id), email: user.email, name: user.name, sv: user.sessionVersion } : null
      },
    }),
  ],
  callbacks: {
    jwt({ token, user }) {
      if (user) {
        const t = token as { uid?: number; sv?: number; sat?: number }
        t.uid = Number(user.id)
        t.sv = (user as { sv?: number }).sv ?? 0
        t.sat = Math.floor(Date.now() / 1000)
      }
      return token
    },
    session({ session, token }) {
      const uid = (token as { uid?: number }).uid
      if (session.user && uid) (session.user as { id?: number }).id = uid
      return session
    },
  },
})
