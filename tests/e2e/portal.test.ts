import { describe, expect, it } from 'vitest'
import { call, signIn } from '../support/http'

describe('customer portal', () => {
  it('each customer sees only its own shipments', async () => {
    const quill = await call('GET', '/api/portal/shipments', { cookie: await signIn('buyer@quillfeather.test') })
    const salt = await call('GET', '/api/portal/shipments', { cookie: await signIn('buyer@saltmarsh.test') })
    expect(quill.status).toBe(200)
    expect(quill.body.customer).toBe('Quillfeather Radio Observatory')
    expect(quill.body.shipments.map((s: any) => s.code)).toEqual(['SH-2611-002'])
    expect(salt.body.shipments.map((s: any) => s.code)).toEqual(['SH-2611-001'])
    const serialsQ = new Set(quill.body.shipments.flatMap((s: any) => s.units.map((u: any) => u.serial)))
    for (const s of salt.body.shipments) for (const u of s.units) expect(serialsQ.has(u.serial)).toBe(false)
    expect(quill.body.shipments[0].units.every((u: any) => u.finalVerdict === 'pass')).toBe(true)
  })

  it('staff cannot read the portal route and customers cannot read staff routes', async () => {
    expect((await call('GET', '/api/portal/shipments', { cookie: await signIn('engineer@tercet.test') })).status).toBe(403)
    expect((await call('GET', '/api/lots', { cookie: await signIn('buyer@quillfeather.test') })).status).toBe(403)
  })
})
