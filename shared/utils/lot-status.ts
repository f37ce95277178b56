export type LotStatus = 'open' | 'on_hold' | 'released' | 'shipped'

export const LOT_STATUS_LABEL: Record<LotStatus, string> = { open: 'Open', on_hold: 'On hold', released: 'Released', shipped: 'Shipped' }

export function lotStatusLabel(status: string): string {
  return LOT_STATUS_LABEL[status as LotStatus] ?? status
}
