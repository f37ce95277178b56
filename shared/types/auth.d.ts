import type { Role } from '../utils/roles'

declare module '#auth-utils' {
  interface User {
    id: number
    email: string
    name: string
    role: Role
    customerId: number | null
  }
  interface UserSession {
    /** when the user signed in (ms since the epoch); a recent sign-in signs actions (server/utils/signature.ts) */
    loggedInAt?: number
    /** the user's session version when this session was sealed (server/utils/session.ts) */
    version?: number
  }
}

export {}
