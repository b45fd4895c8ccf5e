/** The three roles of Blockbell (README "Roles"), lowest first. */
export const ROLES = ['viewer', 'signaller', 'admin'] as const
export type Role = typeof ROLES[number]

/** True when `role` carries at least the rights of `needed` (admin ⊃ signaller ⊃ viewer). */
export function roleAtLeast(role: Role, needed: Role): boolean {
  return ROLES.indexOf(role) >= ROLES.indexOf(needed)
}

export const ROLE_LABELS: Record<Role, string> = {
  viewer: 'Viewer: watches and reviews',
  signaller: 'Signaller: operates signals in the areas they hold',
  admin: 'Admin: people, layouts, maintenance',
}
