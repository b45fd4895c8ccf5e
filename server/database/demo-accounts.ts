import type { Role } from '#shared/utils/roles'

/** Demo sign-ins of the invented Fernhollow Light Railway club. Printed by the start command and in README. */
export const DEMO_ACCOUNTS: { email: string, name: string, role: Role, password: string }[] = [
  { email: 'admin@fernhollow.example', name: 'Ada Wrenfield', role: 'admin', password: 'lamp-room-admin' },
  { email: 'signaller1@fernhollow.example', name: 'Tam Oakridge', role: 'signaller', password: 'up-main-signaller' },
  { email: 'signaller2@fernhollow.example', name: 'Rhea Lintwhistle', role: 'signaller', password: 'branch-signaller' },
  { email: 'viewer@fernhollow.example', name: 'Milo Brackenby', role: 'viewer', password: 'platform-viewer' },
]
