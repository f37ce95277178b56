import { describe, expect, it } from 'vitest'
import { call, signIn } from '../support/http'

// the demo's shipments are found by their customers' order numbers: QRO-7731 to Quillfeather, SGS-PO-88… to Saltmarsh
describe('customer portal, demo scenario', () => {
  it('each customer lists only its own released shipments', async () => {
    const quill = await call('GET', '/api/shipments?q=QRO-7731', { cookie: await signIn('buyer@quillfeather.test') })
    const salt = await call('GET', '/api/shipments?q=SGS-PO-88', { cookie: await signIn('buyer@saltmarsh.test') })
    expect(quill.status).toBe(200)
    expect(quill.body.shipments.map((s: any) => [s.customerPo, s.status])).toEqual([['QRO-7731', 'released']])
    expect(quill.body.shipments.every((s: any) => s.customer.name === 'Quillfeather Radio Observatory')).toBe(true)
    expect(salt.body.shipments.map((s: any) => [s.customerPo, s.status])).toEqual([['SGS-PO-88522', 'released'], ['SGS-PO-88410', 'dispatched']])
    // Saltmarsh's order numbers are not Quillfeather's to see
    expect((await call('GET', '/api/shipments?q=SGS-PO-88', { cookie: await signIn('buyer@quillfeather.test') })).body.shipments).toEqual([])
  })

  it('every unit of the demo shipments carries a valid certificate, and the tripler shows its ×3 picture', async () => {
    const cookie = await signIn('buyer@saltmarsh.test')
    const list = await call('GET', '/api/shipments?q=SGS-PO-88', { cookie })
    const byPo = new Map(list.body.shipments.map((s: any) => [s.customerPo, s]))
    expect(byPo.get('SGS-PO-88522')).toMatchObject({ status: 'released', units: 24 })
    expect((byPo.get('SGS-PO-88410') as any).carrier).toBe('Brackwater Couriers')
    for (const s of byPo.values()) {
      const detail = await call('GET', `/api/shipments/${(s as any).id}`, { cookie })
      expect(detail.body.units.length).toBeGreaterThan(0)
      expect(detail.body.units.every((u: any) => u.certificate?.status === 'valid')).toBe(true)
    }
    // f_out = 3 × f_in, and the phase noise is drawn with the reference raised by 20·log10(3) (common practice)
    const hit = (await call('GET', '/api/portal/units?q=T32611', { cookie })).body.units[0]
    const unit = await call('GET', `/api/portal/units/${hit.partNumber}/${hit.serial}`, { cookie })
    expect(unit.body.unit.outputHz).toBe(3 * unit.body.unit.inputHz)
    expect(unit.body.phaseNoise.penaltyDb).toBeCloseTo(9.54, 2)
    expect(unit.body.phaseNoise.referencePlusN.length).toBeGreaterThan(0)
    expect(unit.body.certificates).toEqual([expect.objectContaining({ status: 'valid', shipmentCode: (byPo.get('SGS-PO-88522') as any).code })])
  })

  it('the demo lots follow their shipments: the tripler lot released, the doubler lot shipped whole', async () => {
    const cookie = await signIn('quality@tercet.test')
    expect((await call('GET', '/api/lots/T3-2611-A', { cookie })).body.lot.status).toBe('released')
    expect((await call('GET', '/api/lots/D2-2611-A', { cookie })).body.lot.status).toBe('shipped')
  })

  it('customers cannot read staff routes', async () => {
    expect((await call('GET', '/api/lots', { cookie: await signIn('buyer@quillfeather.test') })).status).toBe(403)
  })
})
