import type { CustomerDetail, CustomerSummary } from '#shared/types/customer'

export function useCustomers() {
  const list = useFetch<{ customers: CustomerSummary[] }>('/api/customers', { default: () => ({ customers: [] }) })
  const after = async <T>(p: Promise<T>) => { const r = await p; await list.refresh(); return r }
  return {
    ...list,
    create: (body: { code: string; name: string }) => after($fetch<{ customer: CustomerDetail }>('/api/customers', { method: 'POST', body })),
    change: (id: number, body: Record<string, unknown>) => after($fetch<{ customer: CustomerDetail }>(`/api/customers/${id}`, { method: 'PATCH', body })),
    detail: (id: number) => $fetch<{ customer: CustomerDetail }>(`/api/customers/${id}`),
    addContact: (id: number, body: Record<string, unknown>) => after($fetch(`/api/customers/${id}/contacts`, { method: 'POST', body })),
    changeContact: (id: number, contactId: number, body: Record<string, unknown>) => $fetch(`/api/customers/${id}/contacts/${contactId}`, { method: 'PATCH', body }),
    removeContact: (id: number, contactId: number) => after($fetch(`/api/customers/${id}/contacts/${contactId}`, { method: 'DELETE' })),
  }
}
