// /api/auth/* — sign-in with e-mail and password (next-auth credentials, JWT sessions).
import CredentialsProvider from 'next-auth/providers/credentials'
import { NuxtAuthHandler } from '#auth'
import { checkCredentials } from '../../services/signin'

// next-auth ships CommonJS; the default export needs unwrapping under ESM.
const Credentials = ((CredentialsProvider as unknown as { default?: typeof CredentialsProvider }).default ?? CredentialsProvider)

export default NuxtAuthHandler({
  secret: useRuntimeConfig().authSecret || process.env.AUTH_SECRET,
  session: { strategy: 'jwt', maxAge: 12 * 60 * 60 },
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
        const ip = headers['x-tiepoint-client-ip'] ?? 'unknown'
        const user = await checkCredentials(credentials.email, credentials.password, ip)
        return user ? { id: String(user.id), email: user.email, name: user.name } : null
      },
    }),
  ],
  callbacks: {
    jwt({ token, user }) {
      if (user) (token as { uid?: number }).uid = Number(user.id)
      return token
    },
    session({ session, token }) {
      const uid = (token as { uid?: number }).uid
      if (session.user && uid) (session.user as { id?: number }).id = uid
      return session
    },
  },
})
