import { describe, expect, it } from 'vitest'
import { call, signIn } from '../support/http'

describe('customer portal, demo scenario', () => {
  it('each customer lists only its own released shipments, with their units', async () => {
    const quill = await call('GET', '/api/shipments?q=SH-2611', { cookie: await signIn('buyer@quillfeather.test') })
    const salt = await call('GET', '/api/shipments?q=SH-2611', { cookie: await signIn('buyer@saltmarsh.test') })
    expect(quill.status).toBe(200)
    expect(quill.body.shipments.map((s: any) => s.code)).toEqual(['SH-2611-002'])
    expect(quill.body.shipments.every((s: any) => s.customer.name === 'Quillfeather Radio Observatory')).toBe(true)
    expect(salt.body.shipments.map((s: any) => s.code)).toEqual(['SH-2611-001'])
  })

  it('customers cannot read staff routes', async () => {
    expect((await call('GET', '/api/lots', { cookie: await signIn('buyer@quillfeather.test') })).status).toBe(403)
  })
})
