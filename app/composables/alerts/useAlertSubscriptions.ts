import type { AlertSubscriptionDto, AlertSubscriptionTarget } from '#shared/types/alert'
import { useAlertCount } from './useAlertCount'

/** One's own subscriptions, fetched once per page under one key and shared by every Follow toggle on it. */
export function useAlertSubscriptions() {
  const list = useFetch<{ subscriptions: AlertSubscriptionDto[] }>('/api/me/alert-subscriptions', { key: 'alert-subscriptions', default: () => ({ subscriptions: [] }) })
  const { refresh: refreshCount } = useAlertCount()
  const find = (target: AlertSubscriptionTarget, targetId: number) => list.data.value.subscriptions.find((s) => s.target === target && s.targetId === targetId)
  async function toggle(target: AlertSubscriptionTarget, targetId: number) {
    const current = find(target, targetId)
    if (current) await $fetch(`/api/me/alert-subscriptions/${current.id}`, { method: 'DELETE' })
    else await $fetch('/api/me/alert-subscriptions', { method: 'POST', body: { target, targetId } })
    await Promise.all([list.refresh(), refreshCount()])
  }
  return { ...list, find, toggle }
}
