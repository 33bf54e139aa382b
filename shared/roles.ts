// Roles inside a firm (docs/architecture.md, Roles) and who may do what. Used by the
// server guards and by the app to show only the navigation a role can use.
export const ROLES = ['owner', 'party_chief', 'field_crew', 'licensed_surveyor', 'client'] as const
export type Role = (typeof ROLES)[number]

export const ROLE_LABELS: Record<Role, string> = {
  owner: 'Owner',
  party_chief: 'Party chief',
  field_crew: 'Field crew',
  licensed_surveyor: 'Licensed surveyor',
  client: 'Client',
}

/** Everyone who works for the firm (not its clients). */
export const STAFF: readonly Role[] = ['owner', 'party_chief', 'field_crew', 'licensed_surveyor']
/** May create projects, manage stations and control, run adjustments, publish releases. */
export const CHIEFS: readonly Role[] = ['owner', 'party_chief', 'licensed_surveyor']
/** May sign off control points (also needs a licence number and jurisdiction). */
export const SIGNERS: readonly Role[] = ['licensed_surveyor']
/** May manage members, plan settings and instrument profiles. */
export const OWNERS: readonly Role[] = ['owner']
/** May read the audit log. */
export const AUDITORS: readonly Role[] = ['owner', 'licensed_surveyor']
