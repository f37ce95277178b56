import type { AlertRuleChange, AlertRuleDto, AlertRuleInput, AlertRuleList } from '#shared/types/alert'

export function useAlertRules() {
  const list = useFetch<AlertRuleList>('/api/alert-rules', { default: () => ({ rules: [], stations: [] }) })
  const after = async <T>(p: Promise<T>) => { const r = await p; await list.refresh(); return r }
  return {
    ...list,
    create: (body: AlertRuleInput) => after($fetch<{ rule: AlertRuleDto }>('/api/alert-rules', { method: 'POST', body })),
    change: (id: number, body: AlertRuleChange) => after($fetch<{ rule: AlertRuleDto }>(`/api/alert-rules/${id}`, { method: 'PATCH', body })),
    remove: (id: number) => after($fetch(`/api/alert-rules/${id}`, { method: 'DELETE' })),
  }
}
