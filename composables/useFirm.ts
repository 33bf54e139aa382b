// The firm named in the URL (/f/<slug>/…) and what the signed-in person's role there may do.
import { CHIEFS, OWNERS, AUDITORS, SIGNERS, STAFF, ROLE_LABELS, type Role } from '~~/shared/roles'
import { useSessionStore } from '~~/stores/session'

export function useFirm() {
  const route = useRoute()
  const session = useSessionStore()
  const firmSlug = computed(() => String(route.params.firm ?? session.me?.firms[0]?.slug ?? ''))
  const firm = computed(() => session.me?.firms.find((f) => f.slug === firmSlug.value) ?? null)
  const role = computed<Role | null>(() => firm.value?.role ?? null)
  const roleLabel = computed(() => (role.value ? ROLE_LABELS[role.value] : ''))
  const groups = { staff: STAFF, chief: CHIEFS, owner: OWNERS, audit: AUDITORS, sign: SIGNERS }
  const can = (what: keyof typeof groups) => !!role.value && groups[what].includes(role.value)
  return { firmSlug, firm, role, roleLabel, can }
}
