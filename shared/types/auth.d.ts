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
  // Sealed in the cookie, never sent to the browser.
  interface SecureSessionData {
    sessionVersion: number
  }
}
export {}
