import type { Role } from '../utils/roles'

declare module '#auth-utils' {
  interface User {
    id: number
    email: string
    name: string
    role: Role
  }
  interface UserSession {
    loggedInAt: number
  }
}
export {}
