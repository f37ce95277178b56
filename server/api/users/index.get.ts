import { listUsers } from '../../database/repositories/users'

export default defineEventHandler(async () => ({ users: await listUsers(useDb()) }))
