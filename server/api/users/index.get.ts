import { userList } from '../../services/users'
import type { UserView } from '../../../shared/types/user'

export default defineEventHandler(async (): Promise<{ users: UserView[] }> => ({ users: await userList(useDb()) }))
