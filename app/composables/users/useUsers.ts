import type { UserView } from '#shared/types/user'
import type { Role } from '#shared/utils/roles'

export type NewUserForm = { email: string; name: string; role: Role; customerId: number | null; password: string }

/** Every user, with creating and changing one; each change reads the list again. */
export function useUsers() {
  const list = useFetch<{ users: UserView[] }>('/api/users', { key: 'users', default: () => ({ users: [] }) })
  const after = async <T>(p: Promise<T>) => { const r = await p; await list.refresh(); return r }
  // `ready`: the first read, for the page to await before it renders on the server
  return {
    ...list, ready: list,
    create: (body: NewUserForm) => after($fetch<{ user: UserView }>('/api/users', { method: 'POST', body })),
    change: (id: number, body: Partial<Pick<UserView, 'name' | 'role' | 'customerId' | 'disabled'>>) => after($fetch<{ user: UserView }>(`/api/users/${id}`, { method: 'PATCH', body })),
  }
}
