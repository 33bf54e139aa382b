// A small API client for tests: signs in through the real next-auth routes
// and keeps the session cookie, or uses a bearer token.
import { baseUrl, demoPassword } from './env'

export interface ApiResponse<T = any> {
  status: number
  body: T
  headers: Headers
}

export class Client {
  cookies = new Map<string, string>()
  /** `base`: another app instance than the suite's (the fault tests start their own). */
  constructor(public bearer?: string, public base: string = baseUrl) {}

  private cookieHeader() {
    return [...this.cookies].map(([k, v]) => `${k}=${v}`).join('; ')
  }

  private keep(res: Response) {
    for (const c of res.headers.getSetCookie()) {
      const [pair] = c.split(';')
      const i = pair!.indexOf('=')
      this.cookies.set(pair!.slice(0, i), pair!.slice(i + 1))
    }
  }

  async raw(path: string, init: RequestInit = {}): Promise<Response> {
    const headers = new Headers(init.headers)
    if (this.cookies.size) headers.set('cookie', this.cookieHeader())
    if (this.bearer) headers.set('authorization', `Bearer ${this.bearer}`)
    // A browser sends Origin with every POST, PATCH and DELETE; the server refuses
    // cookie-authenticated changes without it. Tests of that rule set their own.
    const method = (init.method ?? 'GET').toUpperCase()
    if (!['GET', 'HEAD'].includes(method) && !headers.has('origin')) headers.set('origin', this.base)
    const res = await fetch(this.base + path, { ...init, headers, redirect: 'manual' })
    this.keep(res)
    return res
  }

  async request<T = any>(method: string, path: string, body?: unknown): Promise<ApiResponse<T>> {
    const init: RequestInit = { method }
    if (body instanceof FormData) init.body = body
    else if (typeof body === 'string') { init.body = body; init.headers = { 'content-type': 'application/json' } }
    else if (body !== undefined) { init.body = JSON.stringify(body); init.headers = { 'content-type': 'application/json' } }
    const res = await this.raw(path, init)
    const text = await res.text()
    let parsed: any = text
    try { parsed = text ? JSON.parse(text) : null } catch { /* not JSON */ }
    return { status: res.status, body: parsed as T, headers: res.headers }
  }

  get<T = any>(path: string) { return this.request<T>('GET', path) }
  post<T = any>(path: string, body?: unknown) { return this.request<T>('POST', path, body) }
  patch<T = any>(path: string, body?: unknown) { return this.request<T>('PATCH', path, body) }
  delete<T = any>(path: string) { return this.request<T>('DELETE', path) }

  /** Signs in with e-mail and password; returns the HTTP status of the attempt. */
  async signIn(email: string, password = demoPassword): Promise<number> {
    const csrf = await this.get<{ csrfToken: string }>('/api/auth/csrf')
    const form = new URLSearchParams({ csrfToken: csrf.body.csrfToken, email, password, json: 'true' })
    const res = await this.raw('/api/auth/callback/credentials', {
      method: 'POST', body: form, headers: { 'content-type': 'application/x-www-form-urlencoded' },
    })
    await res.text()
    return res.status
  }
}

/** A client signed in as the given demo user (throws when sign-in fails). */
export async function as(email: string, password = demoPassword, base = baseUrl): Promise<Client> {
  const c = new Client(undefined, base)
  await c.signIn(email, password)
  const me = await c.get('/api/me')
  if (me.status !== 200) throw new Error(`sign-in as ${email} failed: ${me.status} ${JSON.stringify(me.body)}`)
  return c
}

export const DEMO = {
  owner: 'owner@tiepoint.test',
  chief: 'chief@tiepoint.test',
  crew: 'crew@tiepoint.test',
  surveyor: 'surveyor@tiepoint.test',
  client: 'client@tiepoint.test',
  other: 'other@tiepoint.test',
  firm: 'larchmere',
  otherFirm: 'kestrel',
} as const

/** Waits (outside a test, e.g. in beforeAll) until a run's status route says `done`; throws with the last status otherwise. */
export async function runDone(client: Client, statusPath: string, timeoutMs = 60_000): Promise<void> {
  const until = Date.now() + timeoutMs
  let last: unknown = null
  while (Date.now() < until) {
    last = (await client.get(statusPath)).body?.status
    if (last === 'done') return
    await new Promise((r) => setTimeout(r, 500))
  }
  throw new Error(`${statusPath} is still ${String(last)} after ${timeoutMs} ms`)
}
