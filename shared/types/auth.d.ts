import type { Role } from '../utils/roles'

declare module '#auth-utils' {
  interface User {
    id: number
    email: string
    name: string
    role: Role
    customerId: number | null
  }
}

export {}
