import type { Role } from '../utils/roles'

/** A user as the user administration reads it (GET /api/users, and the answers of creating or changing one). */
export type UserView = {
  id: number; email: string; name: string; role: Role; customerId: number | null; customerName: string | null
  disabled: boolean; lastSignInAt: string | null; createdAt: string
}
