import { describe, expect, it } from 'vitest'
import { alertRaised, calibrationDue } from '../../../server/services/mail/templates'

const env = { NUXT_PUBLIC_SITE_URL: 'https://tercet.example.test/' } as NodeJS.ProcessEnv
const hrefs = (html: string) => [...html.matchAll(/href="([^"]*)"/g)].map((m) => m[1])

describe('alertRaised', () => {
  const base = {
    name: 'Ines Calloway', ruleName: 'Tune yield under 90 %', kindLabel: 'First-pass yield low', subjectLabel: 'VFW-T3-375 · tune',
    summary: 'first-pass yield 80 % over the last 20 units (16 passed first time), below 90 %',
    figures: [{ label: 'First-pass yield', value: 80, unit: '%' }, { label: 'Units', value: 20 }, { label: 'LSL', value: null, unit: 'dBm' }, { label: 'Mean', value: 2.5e-14, unit: 's' }, { label: 'Slope', value: -1.2e-16, unit: 's per unit' }],
    link: '/lots/T3-2612-B?name=output_power&step=final', raisedAt: new Date('2026-12-02T09:15:00Z'),
  }
  it('names the rule and subject, states the summary and every figure with its unit in both parts', () => {
    const m = alertRaised(base, env)
    expect(m.subject).toBe('Tercet alert: Tune yield under 90 % — VFW-T3-375 · tune')
    for (const part of [m.text, m.html]) {
      expect(part).toContain('2026-12-02 09:15 UTC')
      expect(part).toContain('80\u00a0%')
      // jitter is stored in seconds and read in femtoseconds, as on the pages (1 fs = 1e-15 s)
      expect(part).toContain('25.0\u00a0fs')
      expect(part).toContain('\u22120.1200\u00a0fs per unit')
      expect(part).toContain('First-pass yield')
    }
    expect(m.text).toContain('LSL:')
    expect(m.text).toContain('—')
    expect(m.text).not.toMatch(/<[a-z]/i)
  })
  it('links the page of Tercet that shows it, as an absolute address', () => {
    const m = alertRaised(base, env)
    const link = 'https://tercet.example.test/lots/T3-2612-B?name=output_power&step=final'
    expect(m.text).toContain(link)
    expect(hrefs(m.html)).toEqual([link.replace('&', '&amp;')])
  })
  it('escapes every interpolated value in the HTML part', () => {
    const m = alertRaised({ ...base, ruleName: '<script>x</script>', summary: 'a & "b"', figures: [{ label: '<img src=x>', value: "O'Neil" }] }, env)
    expect(m.html).not.toContain('<script>')
    expect(m.html).not.toContain('<img')
    expect(m.html).toContain('&lt;script&gt;x&lt;/script&gt;')
    expect(m.html).toContain('a &amp; &quot;b&quot;')
    expect(m.html).toContain('O&#39;Neil')
  })
})

describe('calibrationDue', () => {
  const base = { name: 'Bram Oduya', assetNumber: 'VFW-PS-2262', station: 'ATE-X8-01', dueOn: '2026-12-12', daysLeft: 10, link: '/stations/4' }
  it('tells the owner the instrument, station and due date, with the station page', () => {
    const m = calibrationDue(base, env)
    expect(m.subject).toBe('Calibration: VFW-PS-2262 on ATE-X8-01 due 2026-12-12')
    expect(m.text).toContain('in 10 days')
    expect(m.text).toContain('https://tercet.example.test/stations/4')
    expect(hrefs(m.html)).toEqual(['https://tercet.example.test/stations/4'])
  })
  it('says past due, or no record, when that is the case, and escapes values', () => {
    expect(calibrationDue({ ...base, dueOn: '2026-11-29', daysLeft: -3 }, env).subject).toContain('past due since 2026-11-29')
    expect(calibrationDue({ ...base, dueOn: null, daysLeft: null }, env).text).toContain('has no calibration record in force')
    expect(calibrationDue({ ...base, station: '<b>S</b>' }, env).html).not.toContain('<b>S</b>')
  })
})
