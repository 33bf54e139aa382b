// The signed-in person and their firms (from GET /api/me), shared by every page.
import { defineStore } from 'pinia'
import type { Role } from '~~/shared/roles'

export interface MeFirm { slug: string; name: string; role: Role }
export interface Me {
  user: { id: number; email: string; name: string; licenceNumber: string | null; licenceJurisdiction: string | null }
  firms: MeFirm[]
  /** the development mailbox is on (no SMTP server configured) */
  devMailbox?: boolean
}

export const useSessionStore = defineStore('session', () => {
  const me = ref<Me | null>(null)
  const loaded = ref(false)

  async function load(force = false) {
    if (loaded.value && !force) return me.value
    try {
      me.value = await useRequestFetch()('/api/me') as Me
    } catch {
      me.value = null
    }
    loaded.value = true
    return me.value
  }

  function clear() {
    me.value = null
    loaded.value = false
  }

  return { me, loaded, load, clear }
})
