import { describe, expect, it } from 'vitest'
import { call, signIn } from '../support/http'

describe('customer portal, demo scenario', () => {
  it('each customer lists only its own released shipments, with their units', async () => {
    const quill = await call('GET', '/api/shipments?q=SH-2611', { cookie: await signIn('buyer@quillfeather.test') })
    const salt = await call('GET', '/api/shipments?q=SH-2611', { cookie: await signIn('buyer@saltmarsh.test') })
    expect(quill.status).toBe(200)
    expect(quill.body.shipments.map((s: any) => s.code)).toEqual(['SH-2611-002'])
    expect(quill.body.shipments.every((s: any) => s.customer.name === 'Quillfeather Radio Observatory')).toBe(true)
    expect(salt.body.shipments.map((s: any) => s.code)).toEqual(['SH-2611-003', 'SH-2611-001'])
  })

  it('every unit of the demo shipments carries a valid certificate with its frozen statement', async () => {
    const cookie = await signIn('buyer@saltmarsh.test')
    const list = await call('GET', '/api/shipments?q=SH-2611', { cookie })
    const byCode = new Map(list.body.shipments.map((s: any) => [s.code, s]))
    expect(byCode.get('SH-2611-001')).toMatchObject({ status: 'dispatched', units: 40 })
    expect(byCode.get('SH-2611-003')).toMatchObject({ status: 'released', units: 24 })
    for (const s of byCode.values()) {
      const detail = await call('GET', `/api/shipments/${(s as any).id}`, { cookie })
      expect(detail.body.units.every((u: any) => u.certificate?.status === 'valid')).toBe(true)
    }
    // the tripler of the demo: f_out = 3 × f_in, and its phase noise is drawn with the reference + 20·log10(3) line
    const serial = (await call('GET', '/api/portal/units?q=T32611', { cookie })).body.units[0]
    const unit = await call('GET', `/api/portal/units/${serial.partNumber}/${serial.serial}`, { cookie })
    expect(unit.body.unit.outputHz).toBe(3 * unit.body.unit.inputHz)
    expect(unit.body.phaseNoise.referencePlusN.length).toBeGreaterThan(0)
    expect(unit.body.certificates).toEqual([expect.objectContaining({ status: 'valid', shipmentCode: 'SH-2611-003' })])
  })

  it('customers cannot read staff routes', async () => {
    expect((await call('GET', '/api/lots', { cookie: await signIn('buyer@quillfeather.test') })).status).toBe(403)
  })
})
