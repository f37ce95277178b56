import { describe, expect, it } from 'vitest'
import { calibrationImpact } from '../../../server/services/mail/templates'

const env = { NUXT_PUBLIC_SITE_URL: 'https://tercet.example.test/' } as NodeJS.ProcessEnv
const base = {
  makerName: 'Vellmar Frequency Works', customerName: 'Saltmarsh Ground Systems', instrument: { kind: 'Signal source analyser', model: 'PNA-40' },
  calibratedOn: '2031-03-10T00:00:00.000Z', windowFrom: '2030-09-01T00:00:00.000Z', windowTo: '2031-03-10T00:00:00.000Z',
  units: [
    { partNumber: 'VFW-D2-250', serial: 'D2-0001', certificates: ['VFW-2031-000123'], decision: 'no_impact' as const, reason: null },
    { partNumber: 'VFW-D2-250', serial: 'D2-0002', certificates: ['VFW-2031-000124'], decision: 'recall' as const, reason: 'Margin below the analyser error' },
  ],
}

describe('calibrationImpact', () => {
  it('names every serial with its certificate and decision, the dates, and defers to the customer\'s acceptance rules in both parts', () => {
    const m = calibrationImpact(base, env)
    expect(m.subject).toBe('Calibration finding on 2 units you hold — Vellmar Frequency Works')
    expect(m.text).toContain('  VFW-D2-250 D2-0001 — certificate VFW-2031-000123 — no effect on the certified results')
    expect(m.text).toContain('  VFW-D2-250 D2-0002 — certificate VFW-2031-000124 — we ask you to return this unit (Margin below the analyser error)')
    for (const part of [m.text, m.html]) {
      for (const s of ['D2-0001', 'D2-0002', 'VFW-2031-000123', 'VFW-2031-000124', '2031-03-10', '2030-09-01', 'Signal source analyser (PNA-40)']) expect(part).toContain(s)
      expect(part).toContain('Your own acceptance rules decide')
      expect(part).toContain('A recall does not withdraw a certificate by itself')
    }
    expect(m.text).toContain('https://tercet.example.test/portal')
    expect(m.text).not.toMatch(/<[a-z]/i)
  })

  it('escapes every value in the HTML part', () => {
    const m = calibrationImpact({ ...base, customerName: '<script>x</script>', units: [{ ...base.units[0]!, serial: '<img src=x>' }] }, env)
    expect(m.html).not.toContain('<script>')
    expect(m.html).not.toContain('<img')
    expect(m.html).toContain('&lt;img src=x&gt;')
  })
})
