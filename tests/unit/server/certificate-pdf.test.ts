// The certificate document, read back as text by an independent PDF reader (pdf.js through unpdf).
import { createHash } from 'node:crypto'
import { extractText, getDocumentProxy } from 'unpdf'
import { describe, expect, it } from 'vitest'
import { renderCertificate, TEMPLATE_VERSION } from '../../../server/services/certificates/render-pdf'
import type { CertificateSnapshot } from '../../../shared/types/certificate'

// an invented tripler certificate; every number here is written out by hand
const SNAPSHOT: CertificateSnapshot = {
  maker: { name: 'Vellmar Frequency Works', address: ['Quarry Lane 14', 'Demo County'] },
  number: 'VFW-C-2026-004711',
  verifyCode: '3K7Q-MXRB-9TDH-W2PC-N4FZ-GA8V-LE',
  verifyUrl: 'http://localhost:3000/verify/3K7Q-MXRB-9TDH-W2PC-N4FZ-GA8V-LE',
  issuedAt: '2026-11-30T14:05:00.000Z',
  issuedBy: { name: 'Rosa Fenwright', role: 'Quality engineer' },
  customer: { name: 'Quillfeather Radio Observatory', code: 'QUILL' },
  shipment: { code: 'SH-2611-077', customerPo: 'QRO-7731' },
  product: { partNumber: 'VFW-T3-375', name: 'Tripler 125 → 375 MHz', multiplication: 3, inputFrequencyHz: 125e6, outputFrequencyHz: 375e6 },
  unit: { serial: 'T3-2611-A-0042', lot: 'T3-2611-A' },
  test: { step: 'final', startedAt: '2026-11-28T09:12:30.000Z', finishedAt: '2026-11-28T09:14:05.000Z', station: 'ATE-T3-01', runId: '7d0c3a4e-0000-4000-8000-000000000001', temperatureC: 23.4 },
  specification: { revision: 2, approvedAt: '2026-10-03T08:00:00.000Z' },
  attempts: [
    { step: 'tune', attempts: 1, maxAttempts: 3, disposition: null },
    { step: 'burn-in', attempts: 1, maxAttempts: 3, disposition: null },
    { step: 'final', attempts: 4, maxAttempts: 3, disposition: 'deviation at attempt 4: connector reseated, retest accepted' },
  ],
  instruments: [
    { asset: 'VFW-SA-0422', kind: 'Signal source analyser', model: 'PNA-40', serial: 'PN40-17790', calibrationCertificate: 'BML-25-1140-R1', laboratory: 'Brackenholt Metrology Laboratory', calibratedOn: '2026-04-16T00:00:00.000Z', dueAt: '2027-04-16T00:00:00.000Z' },
    { asset: 'VFW-PS-2244', kind: 'Power sensor', model: 'PS-18', serial: 'PS18-40688', calibrationCertificate: 'CCS-2025-4102', laboratory: 'Corvale Calibration Services', calibratedOn: '2026-06-25T00:00:00.000Z', dueAt: '2027-06-25T00:00:00.000Z' },
  ],
  characteristics: [
    { label: 'Output power', name: 'output_power', qualifier: 0, value: 7.12, unit: 'dBm', lsl: 5.5, usl: 8.5, rule: 'guarded', guardBand: 0.3, verdict: 'pass', step: 'final', derived: false },
    { label: 'Harmonic rejection @ H2', name: 'harmonic_rejection', qualifier: 2, value: 27.4, unit: 'dB', lsl: 28, usl: null, rule: 'simple', guardBand: null, verdict: 'fail', step: 'final', derived: false },
    { label: 'Phase noise @ 10 kHz', name: 'phase_noise', qualifier: 1e4, value: -147.6, unit: 'dBc/Hz', lsl: null, usl: -144, rule: 'guarded', guardBand: 1.5, verdict: 'pass', step: 'final', derived: false },
  ],
  jitter: { valueS: 14.3e-15, fromHz: 1e3, toHz: 1e6, uslS: 40e-15, verdict: 'pass' },
  phaseNoise: {
    measured: [{ offsetHz: 100, dBcHz: -117.1 }, { offsetHz: 1e3, dBcHz: -137.0 }, { offsetHz: 1e4, dBcHz: -147.6 }],
    trace: [{ offsetHz: 100, dBcHz: -117 }, { offsetHz: 316, dBcHz: -128 }, { offsetHz: 1e3, dBcHz: -137 }, { offsetHz: 3162, dBcHz: -143 }, { offsetHz: 1e4, dBcHz: -147.5 }],
    mask: [{ offsetHz: 100, dBcHz: -114 }, { offsetHz: 1e3, dBcHz: -134 }, { offsetHz: 1e4, dBcHz: -144 }],
    referencePlusN: [{ offsetHz: 100, dBcHz: -118.46 }, { offsetHz: 1e3, dBcHz: -138.46 }, { offsetHz: 1e4, dBcHz: -148.46 }],
  },
  supersedes: 'VFW-C-2026-004650',
}

async function textOf(pdf: Buffer): Promise<string> {
  const doc = await getDocumentProxy(new Uint8Array(pdf))
  const { text } = await extractText(doc, { mergePages: true })
  return (text as string).replace(/\s+/g, ' ')
}

describe('certificate document', async () => {
  const pdf = await renderCertificate(SNAPSHOT, TEMPLATE_VERSION)
  const text = await textOf(pdf)

  it('states the unit, the product and its frequencies', () => {
    expect(text).toContain('T3-2611-A-0042')
    expect(text).toContain('VFW-T3-375')
    expect(text).toContain('Multiplication N ×3')
    // common practice: a ×3 multiplier driven at 125 MHz puts out 3 × 125 MHz = 375 MHz
    expect(text).toContain('Input frequency f_in 125 MHz')
    expect(text).toContain('Output frequency f_out = N·f_in 375 MHz')
    expect(text).toContain('QRO-7731')
    expect(text).toContain('final on ATE-T3-01')
    expect(text).toContain('revision 2')
  })

  it('lists each key characteristic with its value, limits, decision rule and verdict in words', () => {
    // each quantity to the decimals every page shows it with: dBm and dB to 2, dBc/Hz to 1, jitter in fs to 1
    expect(text).toContain('Output power final 7.12 dBm 5.50 dBm 8.50 dBm guarded, band 0.30 dB PASS')
    expect(text).toContain('Harmonic rejection @ H2 final 27.40 dB 28.00 dB — simple acceptance FAIL')
    expect(text).toContain('Phase noise @ 10 kHz final −147.6 dBc/Hz — −144.0 dBc/Hz guarded, band 1.50 dB PASS')
    expect(text).toContain('Integrated RMS jitter 14.3 fs over 1 kHz to 1 MHz offset, upper limit 40.0 fs PASS')
    // one characteristic failed: the statement does not claim conformance
    expect(text).toContain('1 of the characteristics stated below did not meet revision 2')
    expect(text).toContain('final 4 3 deviation at attempt 4')
  })

  it('names each instrument with its calibration certificate and due date', () => {
    expect(text).toContain('BML-25-1140-R1')
    expect(text).toContain('2027-04-16')
    expect(text).toContain('CCS-2025-4102')
    expect(text).toContain('2027-06-25')
  })

  it('draws the reference + 20·log10(N) line for the tripler (×3 → +9.54 dB) and carries the caution and verification code', () => {
    // common practice: an ideal ×N multiplier adds 20·log10(N) dB of phase noise; 20·log10(3) = 9.54 dB
    expect(text).toContain('reference + 20·log10(3) = reference + 9.54 dB')
    expect(text).toContain('ILAC-G8:09/2019')
    expect(text).toContain('incoming acceptance criteria')
    expect(text).toContain('qualified personnel')
    expect(text).toContain('3K7Q-MXRB-9TDH-W2PC-N4FZ-GA8V-LE')
    expect(text).toContain('supersedes VFW-C-2026-004650')
    // a symbol the embedded subset lacks is spelled out rather than lost
    expect(text).toContain('Tripler 125 -> 375 MHz')
  })

  it('is the same file, byte for byte, when rendered again', async () => {
    const again = await renderCertificate(structuredClone(SNAPSHOT), TEMPLATE_VERSION)
    expect(createHash('sha256').update(again).digest('hex')).toBe(createHash('sha256').update(pdf).digest('hex'))
    // and a different certificate is a different file
    const other = await renderCertificate({ ...SNAPSHOT, unit: { ...SNAPSHOT.unit, serial: 'T3-2611-A-0043' } }, TEMPLATE_VERSION)
    expect(other.equals(pdf)).toBe(false)
  })

  it('embeds subsets of Inter and Roboto Mono and uses no standard font', () => {
    const raw = pdf.toString('latin1')
    const names = [...raw.matchAll(/\/BaseFont \/([^\s/>]+)/g)].map((m) => m[1]!)
    expect(names.length).toBeGreaterThan(0)
    for (const n of names) expect(n).toMatch(/^[A-Z]{6}\+(Inter-(Regular|SemiBold)|RobotoMono-(Regular|Bold))$/)
    expect(new Set(names.map((n) => n.split('+')[1]))).toEqual(new Set(['Inter-Regular', 'Inter-SemiBold', 'RobotoMono-Regular', 'RobotoMono-Bold']))
    const descriptors = (raw.match(/\/Type \/FontDescriptor/g) ?? []).length
    const embedded = (raw.match(/\/FontFile[23] \d+ 0 R/g) ?? []).length
    expect(embedded).toBe(descriptors)
    expect(raw).not.toMatch(/\/Subtype \/Type1|Helvetica|Times-Roman|Courier|ZapfDingbats|\/Symbol/)
  })

  it('refuses a template version it does not know', async () => {
    await expect(renderCertificate(SNAPSHOT, TEMPLATE_VERSION + 1)).rejects.toThrow(/template version/)
  })

  it('still draws a certificate issued under template 1 as it was issued: values as posted', async () => {
    const old = await textOf(await renderCertificate(structuredClone(SNAPSHOT), 1))
    expect(old).toContain('Output power final 7.12 dBm 5.5 dBm 8.5 dBm guarded, band 0.3 dB PASS')
    expect(old).toContain('upper limit 40 fs PASS')
    expect(old).toContain('template 1 ·')
  })
})
