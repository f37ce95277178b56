import type { OutboxView, ReceivedView } from '#shared/types/mail'

/** The outgoing queue and what the local mail catcher received; refresh() reads both again. */
export function useOutbox() {
  const queue = useFetch<OutboxView>('/api/admin/outbox', { key: 'admin-outbox', default: () => ({ relay: null, counts: {}, messages: [] }) })
  const received = useFetch<ReceivedView>('/api/admin/outbox/received', { key: 'admin-outbox-received', default: () => ({ inUse: false, messages: [] }) })
  const refresh = () => Promise.all([queue.refresh(), received.refresh()])
  return { queue, received, refresh }
}
