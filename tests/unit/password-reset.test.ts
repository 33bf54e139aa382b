// The reset confirm checks the link's token before it computes the
// (deliberately slow) bcrypt hash of the new password, so a stream of made-up
// tokens costs the server a lookup each, not a hash each.
import { beforeEach, describe, expect, it, vi } from 'vitest'

const hashPassword = vi.fn(async (p: string) => `hashed:${p}`)
vi.mock('../../server/services/passwords', async (orig) => ({ ...(await orig<typeof import('../../server/services/passwords')>()), hashPassword }))

/** A database with no open reset link: every select finds nothing; a transaction would be a bug here. */
const transaction = vi.fn()
const chain = (): unknown => new Proxy(() => undefined, {
  get(_t, prop) {
    if (prop === 'then') return (resolve: (v: unknown) => void) => resolve([])
    return () => chain()
  },
})
vi.mock('../../server/db/client', () => ({ useDb: () => ({ select: () => chain(), transaction }), usePool: () => ({}) }))

beforeEach(() => { hashPassword.mockClear(); transaction.mockClear() })

describe('password reset confirm', () => {
  it('refuses a made-up token without hashing the password or opening a transaction', async () => {
    const { confirmPasswordReset } = await import('../../server/services/password-reset')
    await expect(confirmPasswordReset('tpr_made_up', 'a brand new password')).rejects.toMatchObject({ kind: 'not_found' })
    expect(hashPassword).not.toHaveBeenCalled()
    expect(transaction).not.toHaveBeenCalled()
  })
})
