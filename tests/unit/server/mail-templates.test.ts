import { describe, expect, it } from 'vitest'
import { escapeHtml, passwordReset, shipmentReleased } from '../../../server/services/mail/templates'
import { messageIdDomain, newMessageId } from '../../../server/services/mail/outbox'

const env = { NUXT_PUBLIC_SITE_URL: 'https://tercet.example.test/' } as NodeJS.ProcessEnv
const hrefs = (html: string) => [...html.matchAll(/href="([^"]*)"/g)].map((m) => m[1])

describe('shipmentReleased', () => {
  const base = { shipmentId: 42, code: 'SH-2612-007', customerName: 'Quillfeather Radio', po: 'QRO-7731', units: 12, makerName: 'Vellmar Frequency Works' }

  it('names the shipment, PO and unit count in the subject and both parts', () => {
    const m = shipmentReleased(base, env)
    expect(m.subject).toBe('Shipment SH-2612-007 released — 12 units, PO QRO-7731')
    for (const part of [m.text, m.html]) {
      expect(part).toContain('SH-2612-007')
      expect(part).toContain('QRO-7731')
      expect(part).toContain('12')
    }
    expect(m.html.startsWith('<!doctype html>')).toBe(true)
    expect(m.text).not.toMatch(/<[a-z]/i)
  })

  it('links the portal page of the shipment, without a doubled slash, in both parts', () => {
    const m = shipmentReleased(base, env)
    const link = 'https://tercet.example.test/portal/shipments/42'
    expect(m.text).toContain(link)
    expect(hrefs(m.html)).toEqual([link])
  })

  it('falls back to the local address when no public site address is set', () => {
    expect(shipmentReleased(base, {} as NodeJS.ProcessEnv).text).toContain('http://localhost:3000/portal/shipments/42')
  })

  it('escapes every interpolated value in the HTML part', () => {
    const m = shipmentReleased({ ...base, code: '<b>X</b>', customerName: 'A & "B" <script>alert(1)</script>', po: "O'Neil<img src=x>" }, env)
    expect(m.html).not.toContain('<script>')
    expect(m.html).not.toContain('<img')
    expect(m.html).not.toContain('<b>X</b>')
    expect(m.html).toContain('&lt;script&gt;alert(1)&lt;/script&gt;')
    expect(m.html).toContain('O&#39;Neil&lt;img src=x&gt;')
    expect(m.html).toContain('A &amp; &quot;B&quot;')
    // the plain part keeps the text as typed
    expect(m.text).toContain("O'Neil<img src=x>")
  })

  it('says a PO was not given and uses the singular for one unit', () => {
    const m = shipmentReleased({ ...base, po: null, units: 1 }, env)
    expect(m.subject).toBe('Shipment SH-2612-007 released — 1 unit')
    expect(m.text).toContain('Your PO:   not given')
  })
})

describe('passwordReset', () => {
  const link = 'https://tercet.example.test/password/reset?token=abc&x=1'

  it('carries the link, the 30-minute expiry and the "ignore" advice in both parts', () => {
    const m = passwordReset({ name: 'Ada Quist', link })
    expect(m.text).toContain(link)
    expect(hrefs(m.html)).toEqual(['https://tercet.example.test/password/reset?token=abc&amp;x=1'])
    for (const part of [m.text, m.html]) {
      expect(part).toContain('30 minutes')
      expect(part).toMatch(/did not ask for this, ignore this message/)
    }
  })

  it('escapes the name and refuses a non-http link in the href', () => {
    const m = passwordReset({ name: '<i>Eve</i>', link: 'javascript:alert(1)' })
    expect(m.html).toContain('&lt;i&gt;Eve&lt;/i&gt;')
    expect(hrefs(m.html)).toEqual(['#'])
  })
})

describe('escapeHtml and Message-IDs', () => {
  it('escapes the five HTML-significant characters', () => {
    expect(escapeHtml(`<a href="x">'&'</a>`)).toBe('&lt;a href=&quot;x&quot;&gt;&#39;&amp;&#39;&lt;/a&gt;')
  })

  it('makes unique RFC 5322 msg-ids on the sender domain', () => {
    expect(messageIdDomain({ TERCET_MAIL_FROM: 'Tercet <noreply@Vellmar.example>' } as NodeJS.ProcessEnv)).toBe('vellmar.example')
    expect(messageIdDomain({} as NodeJS.ProcessEnv)).toBe('tercet.invalid')
    const a = newMessageId('vellmar.example')
    // RFC 5322 §3.6.4: msg-id = "<" id-left "@" id-right ">"
    expect(a).toMatch(/^<[A-Za-z0-9.]+@vellmar\.example>$/)
    expect(newMessageId('vellmar.example')).not.toBe(a)
  })
})
