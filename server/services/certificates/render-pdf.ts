// The certificate document, drawn from its frozen snapshot alone. Byte for byte the same for the same snapshot and
// template version: dates come from the snapshot, the file identifier from the certificate number, fonts are the
// embedded Inter and Roboto Mono subsets, and the plot and QR code are vectors.
import { createHash } from 'node:crypto'
import PDFDocument from 'pdfkit'
import QRCode from 'qrcode'
import type { CertificateCharacteristic, CertificatePhaseNoisePoint, CertificateSnapshot } from '../../../shared/types/certificate'
import { formatFrequency } from '../../../shared/utils/measurement-names'
import { decadeRange, logFrequencyLabel } from '../../../shared/utils/phase-noise-plot'
import { multiplicationPenaltyDb } from '../../../shared/utils/rf'
import { fontsFromPackages, parsedFonts, type CertificateFonts } from './fonts'
import { formatQuantity } from '../../../shared/utils/value-format'
import { KNOWN_TEMPLATE_VERSIONS, TEMPLATE_VERSION } from './template'

export { TEMPLATE_VERSION }

// Tercet's palette (tailwind.config.ts)
const C = {
  paper: '#f7f3ea', paperDeep: '#efe8d8', paperEdge: '#e2d9c4',
  ink: '#1d2b45', soft: '#3d4b66', faint: '#6b7690', rule: '#c9cfdb',
  copper: '#b8662a', copperLight: '#e9b98f', copperDark: '#8c4a1a',
  pass: '#2f6b3a', passBg: '#dcebd9', fail: '#a3262a', failBg: '#f4d9d6',
}

const PAGE = { w: 595.28, h: 841.89, m: 42 }
const W = PAGE.w - 2 * PAGE.m
const BOTTOM = PAGE.h - 56

type Doc = PDFKit.PDFDocument

const minus = (s: string) => s.replace(/^-/, '\u2212').replace(/([\s(])-(\d)/g, '$1\u2212$2')
type ValueText = (value: number | null, unit: string, derived?: boolean) => string

/** Template 1, frozen so its certificates render as issued: values as posted (jitter in fs), derived ones to 5 digits. */
function valueTextV1(value: number | null, unit: string, derived = false): string {
  if (value == null) return '—'
  const fs = unit === 's'
  const digits = derived && !fs ? 5 : fs ? 3 : 10
  return `${minus(String(Number.parseFloat((value * (fs ? 1e15 : 1)).toPrecision(digits))))} ${fs ? 'fs' : unit}`
}

/** A value as every page shows it: its quantity's decimals, display unit, minus sign and digit grouping. */
export function shownValue(value: number | null, unit: string): string {
  return formatQuantity(value, unit)
}

const VALUE_TEXT: Record<number, ValueText> = { 1: valueTextV1, 2: shownValue }
// set for the length of one drawing, which runs without a pause from the first page to doc.end()
let valueText: ValueText = shownValue
let drawnVersion = TEMPLATE_VERSION
const day = (iso: string | null) => (iso ? iso.slice(0, 10) : '—')
const minute = (iso: string) => `${iso.slice(0, 10)} ${iso.slice(11, 16)} UTC`

/** The unit of a difference of two values: a band around a level in dBm or dBc/Hz is a ratio, in dB. */
export function differenceUnit(unit: string): string {
  return /^dB[a-zA-Z]*(\/Hz)?$/.test(unit) ? 'dB' : unit
}

function ruleText(c: CertificateCharacteristic): string {
  if (c.rule === 'guarded') return c.guardBand != null ? `guarded, band ${valueText(c.guardBand, differenceUnit(c.unit))}` : 'guarded'
  return 'simple acceptance'
}

// characters the embedded latin subsets lack, written the way a typewriter would
// the narrow no-break space that groups digits is drawn as the thin space the subsets carry (cells never wrap)
const FALLBACK: Record<string, string> = { '\u202f': '\u2009', '\u2192': '->', '\u2190': '<-', '\u2264': '<=', '\u2265': '>=', '\u2248': '~', '\u2026': '...' }
const SUPPORTED = /[\u0020-\u007e\u00a0-\u00ff\u2009\u2013\u2014\u2018\u2019\u201c\u201d\u2022\u2212\u00b7]/
/** Text as the embedded fonts can draw it: known symbols spelled out, anything else unknown as "?". */
export function printable(text: string): string {
  let out = ''
  for (const ch of text) out += SUPPORTED.test(ch) ? ch : FALLBACK[ch] ?? '?'
  return out
}

function label(doc: Doc, text: string, x: number, y: number, width?: number) {
  doc.font('sans').fontSize(6.5).fillColor(C.faint).text(text, x, y, { width, characterSpacing: 0.2, lineBreak: false })
}

/** One line in at most `width`: the size shrinks to 7 pt, then the end gives way to an ellipsis. */
function fitLine(doc: Doc, text: string, font: string, size: number, x: number, y: number, width: number) {
  let t = printable(text)
  doc.font(font).fontSize(size)
  while (size > 7 && doc.widthOfString(t) > width) doc.fontSize((size -= 0.25))
  if (doc.widthOfString(t) > width) {
    while (t.length > 1 && doc.widthOfString(t + '...') > width) t = t.slice(0, -1)
    t += '...'
  }
  doc.text(t, x, y + (9 - size) / 2, { lineBreak: false })
}

function field(doc: Doc, name: string, value: string, x: number, y: number, width: number, mono = false) {
  label(doc, name, x, y, width)
  doc.fillColor(C.ink)
  fitLine(doc, value, mono ? 'mono' : 'sans', 9, x, y + 8, width)
}

function chip(doc: Doc, verdict: 'pass' | 'fail' | null, x: number, y: number) {
  const word = verdict === 'pass' ? 'PASS' : verdict === 'fail' ? 'FAIL' : 'INFO'
  const [fg, bg] = verdict === 'pass' ? [C.pass, C.passBg] : verdict === 'fail' ? [C.fail, C.failBg] : [C.soft, C.paperDeep]
  doc.roundedRect(x, y, 30, 10, 2).fill(bg)
  doc.font('sansBold').fontSize(6.5).fillColor(fg).text(word, x, y + 2, { width: 30, align: 'center', lineBreak: false })
}

function sectionTitle(doc: Doc, title: string, y: number): number {
  doc.font('sansBold').fontSize(9.5).fillColor(C.copperDark).text(title, PAGE.m, y, { lineBreak: false })
  doc.moveTo(PAGE.m, y + 13).lineTo(PAGE.m + W, y + 13).lineWidth(0.5).strokeColor(C.copperLight).stroke()
  return y + 18
}

type Column = { title: string; width: number; mono?: boolean; align?: 'left' | 'right' }

/** A plain table; cells may wrap. Returns the y below it. The caller keeps it on the page. */
function table(doc: Doc, y: number, cols: Column[], rows: (string | { verdict: 'pass' | 'fail' | null })[][]): number {
  let x = PAGE.m
  doc.rect(PAGE.m, y, W, 13).fill(C.paperDeep)
  for (const c of cols) {
    doc.font('sansBold').fontSize(6.5).fillColor(C.soft).text(c.title, x + 3, y + 3.5, { width: c.width - 6, align: c.align ?? 'left', lineBreak: false })
    x += c.width
  }
  y += 13
  for (const row of rows) {
    let h = 12
    row.forEach((cell, i) => {
      if (typeof cell !== 'string') return
      doc.font(cols[i]!.mono ? 'mono' : 'sans').fontSize(7.5)
      h = Math.max(h, doc.heightOfString(printable(cell), { width: cols[i]!.width - 6 }) + 4)
    })
    x = PAGE.m
    row.forEach((cell, i) => {
      const c = cols[i]!
      if (typeof cell === 'string') {
        doc.font(c.mono ? 'mono' : 'sans').fontSize(7.5).fillColor(C.ink).text(printable(cell), x + 3, y + 2.5, { width: c.width - 6, align: c.align ?? 'left' })
      } else chip(doc, cell.verdict, x + 3, y + 1)
      x += c.width
    })
    y += h
    doc.moveTo(PAGE.m, y).lineTo(PAGE.m + W, y).lineWidth(0.4).strokeColor(C.rule).stroke()
  }
  return y
}

function header(doc: Doc, s: CertificateSnapshot) {
  doc.rect(0, 0, PAGE.w, 84).fill(C.paper)
  doc.rect(0, 84, PAGE.w, 2).fill(C.copper)
  doc.font('sansBold').fontSize(15).fillColor(C.ink).text(printable(s.maker.name), PAGE.m, 24, { lineBreak: false })
  doc.font('sans').fontSize(7.5).fillColor(C.soft).text(printable(s.maker.address.join(' · ')), PAGE.m, 44, { width: 280, lineBreak: false, ellipsis: true })
  doc.font('sansBold').fontSize(11).fillColor(C.copperDark).text('Certificate of conformance', PAGE.m + W - 240, 22, { width: 240, align: 'right', lineBreak: false })
  doc.font('mono').fontSize(11).fillColor(C.ink).text(s.number, PAGE.m + W - 240, 38, { width: 240, align: 'right', lineBreak: false })
  doc.font('sans').fontSize(7.5).fillColor(C.soft).text(`Issued ${minute(s.issuedAt)}`, PAGE.m + W - 240, 56, { width: 240, align: 'right', lineBreak: false })
}

function footer(doc: Doc, s: CertificateSnapshot, page: number, pages: number) {
  doc.moveTo(PAGE.m, PAGE.h - 40).lineTo(PAGE.m + W, PAGE.h - 40).lineWidth(0.5).strokeColor(C.rule).stroke()
  doc.font('sans').fontSize(6.5).fillColor(C.faint)
    .text(`${s.number} · template ${drawnVersion} · verify at ${s.verifyUrl}`, PAGE.m, PAGE.h - 34, { width: W - 80, lineBreak: false, ellipsis: true })
  doc.text(`page ${page} of ${pages}`, PAGE.m + W - 80, PAGE.h - 34, { width: 80, align: 'right', lineBreak: false })
}

function identity(doc: Doc, s: CertificateSnapshot, y: number): number {
  const col = W / 4
  const p = s.product
  // [label, value, mono, columns spanned]
  const rows: [string, string, boolean, number][][] = [
    [['Customer', `${s.customer.name} (${s.customer.code})`, false, 2], ['Customer PO', s.shipment.customerPo ?? '—', true, 1], ['Shipment', s.shipment.code, true, 1]],
    [['Product', p.name, false, 1], ['Part number', p.partNumber, true, 1], ['Serial', s.unit.serial, true, 1], ['Lot', s.unit.lot, true, 1]],
    [['Multiplication N', `×${p.multiplication}`, true, 1], ['Input frequency f_in', formatFrequency(p.inputFrequencyHz), true, 1],
      ['Output frequency f_out = N·f_in', formatFrequency(p.outputFrequencyHz), true, 1], ['Specification', `revision ${s.specification.revision}, approved ${day(s.specification.approvedAt)}`, false, 1]],
    [['Test step and station', `${s.test.step} on ${s.test.station}`, false, 1], ['Test started', minute(s.test.startedAt), true, 1],
      ['Test finished', minute(s.test.finishedAt), true, 1], ['Temperature', s.test.temperatureC == null ? '—' : `${minus(String(s.test.temperatureC))} °C`, true, 1]],
    [['Issued by', `${s.issuedBy.name}, ${s.issuedBy.role}`, false, 2], ['Supersedes', s.supersedes ?? 'none', true, 2]],
  ]
  for (const row of rows) {
    let c = 0
    for (const [k, v, mono, span] of row) {
      field(doc, k, v, PAGE.m + c * col, y, span * col - 8, mono)
      c += span
    }
    y += 25
  }
  return y
}

function statement(doc: Doc, s: CertificateSnapshot, y: number): number {
  const failing = s.characteristics.filter((c) => c.verdict === 'fail').length + (s.jitter?.verdict === 'fail' ? 1 : 0)
  const text = failing
    ? `${failing} of the characteristics stated below did not meet revision ${s.specification.revision} of the specification.`
    : `The unit identified above met every characteristic stated below against revision ${s.specification.revision} of its specification, at the test stated above, under the decision rule given for each.`
  doc.rect(PAGE.m, y, W, 26).fill(failing ? C.failBg : C.passBg)
  doc.font('sans').fontSize(8).fillColor(failing ? C.fail : C.pass).text(text, PAGE.m + 8, y + 5, { width: W - 16 })
  return y + 32
}

function characteristics(doc: Doc, s: CertificateSnapshot, y: number): number {
  y = sectionTitle(doc, 'Key characteristics', y)
  const cols: Column[] = [
    { title: 'Characteristic', width: 118 }, { title: 'Step', width: 44 }, { title: 'Measured', width: 74, mono: true, align: 'right' },
    { title: 'Lower limit', width: 70, mono: true, align: 'right' }, { title: 'Upper limit', width: 70, mono: true, align: 'right' },
    { title: 'Decision rule', width: 100 }, { title: 'Verdict', width: W - 476 },
  ]
  const rows = s.characteristics.map((c) => [c.label, c.step, valueText(c.value, c.unit, c.derived), valueText(c.lsl, c.unit), valueText(c.usl, c.unit), ruleText(c), { verdict: c.verdict }])
  y = table(doc, y, cols, rows)
  if (s.jitter) {
    const j = s.jitter
    y += 5
    doc.font('sans').fontSize(7.5).fillColor(C.ink)
      .text(`Integrated RMS jitter ${valueText(j.valueS, 's')} over ${formatFrequency(j.fromHz)} to ${formatFrequency(j.toHz)} offset${j.uslS != null ? `, upper limit ${valueText(j.uslS, 's')}` : ', no limit (information)'}`, PAGE.m, y, { width: W - 40, lineBreak: false })
    if (j.verdict) chip(doc, j.verdict, PAGE.m + W - 32, y - 1.5)
    y += 12
  }
  return y + 6
}

function attempts(doc: Doc, s: CertificateSnapshot, y: number): number {
  y = sectionTitle(doc, 'Attempts per test step', y)
  const cols: Column[] = [{ title: 'Step', width: 90 }, { title: 'Attempts', width: 60, mono: true, align: 'right' }, { title: 'Retest limit', width: 70, mono: true, align: 'right' }, { title: 'Disposition', width: W - 220 }]
  return table(doc, y, cols, s.attempts.map((a) => [a.step, String(a.attempts), a.maxAttempts == null ? '—' : String(a.maxAttempts), a.disposition ?? 'none'])) + 6
}

function instruments(doc: Doc, s: CertificateSnapshot, y: number): number {
  y = sectionTitle(doc, 'Instruments used for the stated test', y)
  if (!s.instruments.length) {
    doc.font('sans').fontSize(7.5).fillColor(C.soft).text('The station recorded no instruments for this test.', PAGE.m, y, { lineBreak: false })
    return y + 16
  }
  const cols: Column[] = [
    { title: 'Asset', width: 66, mono: true }, { title: 'Instrument', width: 150 }, { title: 'Calibration certificate', width: 96, mono: true },
    { title: 'Laboratory', width: 92 }, { title: 'Calibrated', width: 54, mono: true }, { title: 'Due', width: W - 458, mono: true },
  ]
  const rows = s.instruments.map((i) => [i.asset, [i.kind, i.model, i.serial ? `s/n ${i.serial}` : null].filter(Boolean).join(', '), i.calibrationCertificate ?? '—', i.laboratory ?? '—', day(i.calibratedOn), day(i.dueAt)])
  return table(doc, y, cols, rows) + 6
}

function polyline(doc: Doc, pts: [number, number][]) {
  pts.forEach(([x, y], i) => (i ? doc.lineTo(x, y) : doc.moveTo(x, y)))
}

function phaseNoisePlot(doc: Doc, s: CertificateSnapshot, y: number): number {
  const pn = s.phaseNoise
  if (!pn) return y
  y = sectionTitle(doc, 'Phase noise L(f) against the limit mask', y)
  const series: CertificatePhaseNoisePoint[] = [...pn.measured, ...(pn.trace ?? []), ...pn.mask, ...(pn.referencePlusN ?? [])].filter((p) => p.offsetHz > 0 && Number.isFinite(p.dBcHz))
  if (!series.length) return y
  const [e0, e1] = decadeRange(Math.min(...series.map((p) => p.offsetHz)), Math.max(...series.map((p) => p.offsetHz)))
  const lo = Math.floor(Math.min(...series.map((p) => p.dBcHz)) / 10) * 10 - 10
  const hi = Math.ceil(Math.max(...series.map((p) => p.dBcHz)) / 10) * 10 + 10
  const box = { x: PAGE.m + 44, y, w: W - 54, h: 190 }
  const px = (f: number) => box.x + ((Math.log10(f) - e0) / (e1 - e0)) * box.w
  const py = (l: number) => box.y + ((hi - l) / (hi - lo)) * box.h

  doc.rect(box.x, box.y, box.w, box.h).fill(C.paper)
  doc.lineWidth(0.3).strokeColor(C.paperEdge)
  for (let e = e0; e < e1; e++) for (let k = 2; k <= 9; k++) { const x = px(k * 10 ** e); doc.moveTo(x, box.y).lineTo(x, box.y + box.h).stroke() }
  doc.lineWidth(0.5).strokeColor(C.rule)
  const step = hi - lo > 100 ? 20 : 10
  doc.font('mono').fontSize(6.5).fillColor(C.soft)
  for (let l = lo; l <= hi; l += step) {
    doc.moveTo(box.x, py(l)).lineTo(box.x + box.w, py(l)).stroke()
    doc.text(minus(String(l)), box.x - 40, py(l) - 3, { width: 36, align: 'right', lineBreak: false })
  }
  for (let e = e0; e <= e1; e++) {
    doc.moveTo(px(10 ** e), box.y).lineTo(px(10 ** e), box.y + box.h).stroke()
    doc.text(logFrequencyLabel(e), px(10 ** e) - 25, box.y + box.h + 6, { width: 50, align: 'center', lineBreak: false })
  }
  doc.font('sans').fontSize(6.5).fillColor(C.faint).text('offset from carrier (log scale)', box.x, box.y + box.h + 15, { width: box.w, align: 'center', lineBreak: false })
  doc.save().rotate(-90, { origin: [PAGE.m + 2, box.y + box.h / 2] })
    .text('dBc/Hz', PAGE.m + 2 - 30, box.y + box.h / 2 - 3, { width: 60, align: 'center', lineBreak: false }).restore()

  doc.save().rect(box.x, box.y, box.w, box.h).clip()
  if (pn.referencePlusN?.length) {
    polyline(doc, pn.referencePlusN.map((p) => [px(p.offsetHz), py(p.dBcHz)]))
    doc.lineWidth(1).dash(3, { space: 2 }).strokeColor(C.faint).stroke().undash()
  }
  if (pn.mask.length) {
    polyline(doc, pn.mask.map((p) => [px(p.offsetHz), py(p.dBcHz)]))
    doc.lineWidth(1.6).strokeColor(C.copper).stroke()
    for (const p of pn.mask) doc.rect(px(p.offsetHz) - 2, py(p.dBcHz) - 2, 4, 4).fill(C.copper)
  }
  if (pn.trace?.length) {
    polyline(doc, [...pn.trace].sort((a, b) => a.offsetHz - b.offsetHz).map((p) => [px(p.offsetHz), py(p.dBcHz)]))
    doc.lineWidth(0.9).strokeColor(C.ink).stroke()
  }
  for (const p of pn.measured) doc.circle(px(p.offsetHz), py(p.dBcHz), 2.2).fill(C.ink)
  doc.restore()
  doc.rect(box.x, box.y, box.w, box.h).lineWidth(0.6).strokeColor(C.soft).stroke()

  // legend
  let lx = box.x
  const ly = box.y + box.h + 27
  const entry = (draw: (x: number) => void, text: string) => {
    draw(lx)
    doc.font('sans').fontSize(7).fillColor(C.ink).text(text, lx + 18, ly - 3, { lineBreak: false })
    lx += 26 + doc.widthOfString(text)
  }
  if (pn.trace?.length) entry((x) => doc.moveTo(x, ly).lineTo(x + 14, ly).lineWidth(0.9).strokeColor(C.ink).stroke(), 'measured sweep')
  if (pn.measured.length) entry((x) => doc.circle(x + 7, ly, 2.2).fill(C.ink), 'spot values')
  if (pn.mask.length) entry((x) => doc.moveTo(x, ly).lineTo(x + 14, ly).lineWidth(1.6).strokeColor(C.copper).stroke(), `limit mask, revision ${s.specification.revision}`)
  if (pn.referencePlusN?.length) {
    const n = s.product.multiplication
    entry((x) => doc.moveTo(x, ly).lineTo(x + 14, ly).lineWidth(1).dash(3, { space: 2 }).strokeColor(C.faint).stroke().undash(),
      `reference + 20·log10(${n}) = reference + ${multiplicationPenaltyDb(n).toFixed(2)} dB`)
  }
  return ly + 14
}

// the standard's name opens the paragraph, so a line never breaks inside it
const CAUTION = 'ILAC-G8:09/2019 sets out the decision rules used here. Conformance is stated for the conditions given above, at the time of test, '
  + 'under the decision rule given for each characteristic: a simple acceptance compares the measured value with the limit; '
  + 'a guarded rule accepts only values inside the limit by the stated guard band. The customer\'s incoming acceptance '
  + 'criteria and applicable local requirements govern the use of this unit. RF outputs must be terminated, and the unit '
  + 'installed and handled by qualified personnel.'

function closing(doc: Doc, s: CertificateSnapshot, y: number) {
  y = sectionTitle(doc, 'Caution', y)
  doc.font('sans').fontSize(7.5).fillColor(C.soft).text(CAUTION, PAGE.m, y, { width: W })
  y = doc.y + 10
  y = sectionTitle(doc, 'Issue and verification', y)
  const qrSize = 86
  const textW = W - qrSize - 16
  doc.font('sans').fontSize(8).fillColor(C.ink)
    .text(printable(`Issued on ${minute(s.issuedAt)} by ${s.issuedBy.name} (${s.issuedBy.role}) for ${s.maker.name}.`), PAGE.m, y, { width: textW })
  if (s.supersedes) doc.text(`This certificate supersedes ${s.supersedes}, which is no longer valid.`, { width: textW })
  doc.moveDown(0.5).text('Anyone may check this certificate, without signing in, at the address below or by scanning the code. The page states its status (valid, superseded or revoked) and tells whether a copy of this file is the one issued.', { width: textW })
  doc.moveDown(0.5)
  label(doc, 'Verification code', PAGE.m, doc.y)
  doc.font('monoBold').fontSize(11).fillColor(C.ink).text(s.verifyCode, PAGE.m, doc.y + 9, { lineBreak: false })
  doc.font('mono').fontSize(7.5).fillColor(C.copperDark).text(s.verifyUrl, PAGE.m, doc.y + 16, { width: textW, link: s.verifyUrl })
  qr(doc, s.verifyUrl, PAGE.m + W - qrSize, y, qrSize)
}

/** The QR code as filled rectangles, one per horizontal run of dark modules, with its quiet zone. */
function qr(doc: Doc, text: string, x: number, y: number, size: number) {
  const m = QRCode.create(text, { errorCorrectionLevel: 'M' }).modules
  const n = m.size
  const cell = size / (n + 8)
  doc.rect(x, y, size, size).fill('#ffffff')
  for (let r = 0; r < n; r++) {
    let c = 0
    while (c < n) {
      if (!m.get(r, c)) { c++; continue }
      const start = c
      while (c < n && m.get(r, c)) c++
      doc.rect(x + (start + 4) * cell, y + (r + 4) * cell, (c - start) * cell, cell)
    }
  }
  doc.fill(C.ink)
}

/** The certificate as PDF bytes. */
export function renderCertificate(s: CertificateSnapshot, templateVersion: number, fonts: CertificateFonts = fontsFromPackages()): Promise<Buffer> {
  if (!KNOWN_TEMPLATE_VERSIONS.includes(templateVersion)) return Promise.reject(new Error(`template version ${templateVersion} is not known to this renderer`))
  valueText = VALUE_TEXT[templateVersion]!
  drawnVersion = templateVersion
  const at = new Date(s.issuedAt)
  const f = parsedFonts(fonts)
  const doc = new PDFDocument({
    // the default font is the embedded sans, so pdfkit never loads a standard font
    font: f.sans as any,
    size: 'A4', margin: 0, autoFirstPage: false, compress: true, bufferPages: true,
    info: {
      Title: `Certificate of conformance ${s.number}`, Author: s.maker.name, Subject: `${s.product.partNumber} serial ${s.unit.serial}`,
      Creator: `Tercet certificate template ${templateVersion}`, Producer: 'Tercet', CreationDate: at, ModDate: at,
    },
  })
  // the file identifier pdfkit would derive is pinned to the certificate, so nothing about the moment of rendering enters the file
  ;(doc as any)._id = createHash('sha256').update(`${s.number}\n${templateVersion}`).digest().subarray(0, 16)
  for (const name of ['sans', 'sansBold', 'mono', 'monoBold'] as const) doc.registerFont(name, f[name] as any)

  const chunks: Buffer[] = []
  const done = new Promise<Buffer>((resolve, reject) => {
    doc.on('data', (b: Buffer) => chunks.push(b))
    doc.on('end', () => resolve(Buffer.concat(chunks)))
    doc.on('error', reject)
  })

  doc.addPage()
  header(doc, s)
  let y = identity(doc, s, 100)
  y = statement(doc, s, y + 2)
  y = characteristics(doc, s, y)
  y = attempts(doc, s, y)
  if (y + 40 + 14 * s.instruments.length > BOTTOM) { doc.addPage(); header(doc, s); y = 100 }
  instruments(doc, s, y)

  doc.addPage()
  header(doc, s)
  y = phaseNoisePlot(doc, s, 100)
  closing(doc, s, y + 8)
  const { start, count } = doc.bufferedPageRange()
  for (let i = start; i < start + count; i++) {
    doc.switchToPage(i)
    footer(doc, s, i - start + 1, count)
  }
  doc.flushPages()
  doc.end()
  return done
}
