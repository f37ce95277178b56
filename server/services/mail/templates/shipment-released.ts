import { htmlMail, siteUrl, type RenderedMail } from './layout'

export type ShipmentReleasedInput = { shipmentId: number; code: string; customerName: string; po: string | null; units: number; makerName: string }

export function shipmentPortalUrl(shipmentId: number, env: NodeJS.ProcessEnv = process.env): string {
  return `${siteUrl(env)}/portal/shipments/${shipmentId}`
}

/** Tells a customer's certificate contacts that a shipment was released and where its certificates are. */
export function shipmentReleased(i: ShipmentReleasedInput, env: NodeJS.ProcessEnv = process.env): RenderedMail {
  const link = shipmentPortalUrl(i.shipmentId, env)
  const po = i.po?.trim() || 'not given'
  const units = `${i.units} ${i.units === 1 ? 'unit' : 'units'}`
  const subject = `Shipment ${i.code} released — ${units}${i.po?.trim() ? `, PO ${i.po.trim()}` : ''}`
  const text = [
    `Hello from ${i.makerName},`,
    '',
    `shipment ${i.code} for ${i.customerName} has been released by quality. Its per-serial certificates are ready in the portal.`,
    '',
    `  Shipment:  ${i.code}`,
    `  Your PO:   ${po}`,
    `  Units:     ${i.units}`,
    '',
    `Open the shipment: ${link}`,
    '',
    'Each certificate states the results it rests on; your own acceptance rules decide whether the units are accepted.',
    'You receive this because your contact entry is set to receive certificate notices.',
  ].join('\n')
  const html = htmlMail(`Shipment ${i.code} released`, [
    { kind: 'p', text: `Hello from ${i.makerName}: shipment ${i.code} for ${i.customerName} has been released by quality. Its per-serial certificates are ready in the portal.` },
    { kind: 'facts', rows: [['Shipment', i.code], ['Your PO', po], ['Units', String(i.units)]] },
    { kind: 'button', label: 'Open the shipment', href: link },
    { kind: 'note', text: 'Each certificate states the results it rests on; your own acceptance rules decide whether the units are accepted. You receive this because your contact entry is set to receive certificate notices.' },
  ])
  return { subject, text, html }
}
