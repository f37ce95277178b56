// The lot's capability table as a reader sees it: figures with the typographic minus, capability indices to two
// decimals, and each row's band chip (word and colour) at the common-practice Cpk boundaries of 1.33 and 1.00.
import { describe, expect, it } from 'vitest'
import { mountSuspended } from '@nuxt/test-utils/runtime'
import type { VueWrapper } from '@vue/test-utils'
import CapabilityTable from '~/components/lots/CapabilityTable.vue'
import type { CapabilityRow } from '#shared/types/capability'
import { capabilityBand } from '#shared/utils/capability'

let serial = 0
function row(over: Partial<CapabilityRow>): CapabilityRow {
  const n = over.n ?? 50
  const cpk = over.cpk === undefined ? 1.5 : over.cpk
  serial++
  return {
    revisionId: 1, revision: 1, approvedAt: '2026-10-03T08:00:00.000Z', step: 'final', name: `p_${serial}`, qualifier: 0, label: `Param ${serial}`, unit: 'dBm',
    n, mean: 10, sigmaWithin: 0.1, sigmaOverall: 0.1, min: 9.8, max: 10.2, lsl: 9, usl: 11, target: null,
    cp: 1.6, cpk, pp: 1.6, ppk: 1.5, intervals: { cp: null, cpk: null, pp: null, ppk: null },
    outOfSpec: 0, observedPpm: 0, expectedPpm: 0, band: capabilityBand(cpk, n), keyCharacteristic: false, revisionsOfParameter: 1,
    ...over,
  }
}

async function mountTable(rows: CapabilityRow[]) {
  return mountSuspended(CapabilityTable, {
    props: { rows, revisions: [{ revisionId: 1, revision: 1, approvedAt: '2026-10-03T08:00:00.000Z', effectiveAt: null }], code: 'LOT-T1', partNumber: 'PART-T1', attempts: 'first', selectedKey: null },
  })
}

/** The innermost elements of a cell or row: each figure sits in one, whether a cell holds one figure or several. */
const leaves = (el: Element): string[] => (el.children.length ? [...el.children].flatMap(leaves) : [el.textContent?.trim() ?? ''])

/** The cells of the table by column heading, one record per body row. */
function cells(w: VueWrapper) {
  const heads = w.findAll('thead th').map((th) => th.text().replace(/[▲▼·]/g, '').trim().toLowerCase())
  return w.findAll('tbody tr').map((tr) => {
    const tds = tr.findAll('td')
    const byHead: Record<string, { text: string; html: string; first: string }> = {}
    heads.forEach((h, i) => { byHead[h] = { text: tds[i]!.text(), html: tds[i]!.html(), first: leaves(tds[i]!.element)[0]! } })
    return byHead
  })
}

/** A shown figure read back as a number: typographic minus to ASCII, thin-space grouping removed. */
const readBack = (s: string) => Number(s.replace(/\u2212/g, '-').replace(/[\u2009\s]/g, ''))
const decimalsOf = (s: string) => (s.split('.')[1] ?? '').replace(/\D.*$/, '').length

describe('CapabilityTable', () => {
  it('writes negative figures with the typographic minus and within half a unit of their last shown digit', async () => {
    // phase noise: every value negative, an upper limit only
    const pn = row({ unit: 'dBc/Hz', mean: -142.3719, sigmaWithin: 0.71, sigmaOverall: 0.83, min: -144.126, max: -140.208, lsl: null, usl: -138, cpk: 1.69, ppk: 1.45 })
    const w = await mountTable([pn])
    const figures = leaves(w.get('tbody tr').element).filter((t) => /^[−-]?\d/.test(t))
    expect(figures.some((t) => t.startsWith('-')), figures.join(' ')).toBe(false) // U+2212, never the hyphen-minus
    for (const value of [-142.3719, -144.126, -140.208, -138]) {
      // some figure of the row shows this value: with the minus, and right to within half a unit of its last digit
      const match = figures.find((t) => t.startsWith('−') && Math.abs(readBack(t) - value) <= 0.5 * 10 ** -decimalsOf(t) + 1e-12)
      expect(match, `${value} among ${figures.join(' ')}`).toBeDefined()
    }
    const [r] = cells(w)
    expect(leaves(w.get('tbody tr').element)).toContain('—') // no lower limit: a dash, not 0
    expect(r!.parameter!.text).toContain('dBc/Hz')
  })

  it('shows capability indices to two decimals, a negative Cpk with the minus and never “−0.00”', async () => {
    // a process centred outside its USL has a negative Cpk: (USL − mean)/(3σ) < 0
    const outside = row({ mean: 11.12, usl: 11, lsl: 9, sigmaWithin: 0.1, cp: 3.3333, cpk: -0.4, pp: 3.3333, ppk: -0.4 })
    const onEdge = row({ cpk: -0.001, ppk: -0.004 })
    const ok = row({ cpk: 1.3312, cp: 1.41666, ppk: 1.2 })
    const w = await mountTable([outside, onEdge, ok])
    const [a, b, c] = cells(w)
    expect(a!.cpk!.first).toBe('−0.40')
    expect(a!.cp!.first).toBe('3.33')
    expect(b!.cpk!.first).toBe('0.00')
    expect(b!.ppk!.first).toBe('0.00')
    expect(c!.cpk!.first).toBe('1.33')
    expect(c!.cp!.first).toBe('1.42')
  })

  it('bands Cpk at the common-practice boundaries: ≥ 1.33 capable, 1.00 up to 1.33 marginal, below 1.00 not capable', async () => {
    // common practice (automotive and general SPC use): Cpk 1.33 is the usual capability target and 1.00 the floor
    const cases = [
      { cpk: 2.1, word: 'CAPABLE', colour: 'verdict-pass' },
      { cpk: 1.33, word: 'CAPABLE', colour: 'verdict-pass' },
      { cpk: 1.3299, word: 'MARGINAL', colour: 'verdict-marginal' },
      { cpk: 1.0, word: 'MARGINAL', colour: 'verdict-marginal' },
      { cpk: 0.9999, word: 'NOT CAPABLE', colour: 'verdict-fail' },
      { cpk: -0.2, word: 'NOT CAPABLE', colour: 'verdict-fail' },
    ]
    const w = await mountTable(cases.map((c) => row({ cpk: c.cpk })))
    const rows = cells(w)
    cases.forEach((c, i) => {
      const band = rows[i]!.capability!
      expect(band.text, `Cpk ${c.cpk}`).toBe(c.word)
      expect(band.html, `Cpk ${c.cpk}`).toContain(`text-${c.colour}`)
    })
    // the band is never told by colour alone: the three chips carry three different words
    expect(new Set(rows.map((r) => r.capability!.text)).size).toBe(3)
  })

  it('does not band a Cpk from too small a sample or without limits', async () => {
    const few = row({ n: 12, cpk: 1.8 })
    const noLimit = row({ lsl: null, usl: null, cp: null, cpk: null, pp: null, ppk: null })
    const w = await mountTable([few, noLimit])
    const [a, b] = cells(w)
    expect(a!.capability!.text).not.toBe('CAPABLE')
    expect(a!.capability!.html).not.toContain('text-verdict-pass')
    expect(b!.capability!.text).not.toMatch(/CAPABLE/)
    expect(b!.cpk!.first).toBe('—')
  })
})
