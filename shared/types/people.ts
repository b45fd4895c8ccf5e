import type { Role } from '../utils/roles'

/** A user as the People page and the API show them (never the password hash). */
export interface PersonView {
  id: number
  email: string
  name: string
  role: Role
  disabled: boolean
  createdAt: string
}
