// A lot of a fresh doubler that spans a change of specification: runs judged by revision 1, then revision 2 approved
// with different limits and a different phase-noise mask, then more runs judged by revision 2 and one retest.
import { randomUUID } from 'node:crypto'
import { expect } from 'vitest'
import { call, signIn } from './http'
import { stationTokens } from './stations'

export const REVISION_1 = { power: { lsl: 8, usl: 12, target: 10 }, mask: { 1000: -100, 10000: -120 } } as const
export const REVISION_2 = { power: { lsl: 10.5, usl: 13, target: 11.5 }, mask: { 1000: -105, 10000: -125 } } as const
export const OFFSETS = [1000, 10000] as const

// Output power in test order on one station: inside revision 1's limits, then mostly below revision 2's new LSL.
export const POWER_1 = [9.9, 10.2, 9.7, 10.1, 10.4, 9.8, 10.0, 10.3, 9.6, 10.1, 9.9, 10.2]
export const POWER_2 = [10.3, 10.0, 10.6, 10.2, 10.4, 9.9, 10.55, 10.1, 10.7, 10.2, 10.3, 10.0]
/** the retest of the first unit tested under revision 2, after every first attempt */
export const RETEST_2 = 11.2

/** L(f) at 1 kHz and 10 kHz for the i-th unit of a revision: spread so that percentiles differ. */
export function phaseNoiseOf(revision: 1 | 2, i: number): [number, number] {
  return revision === 1 ? [-108 - 0.5 * ((i * 5) % 7), -128 - 0.25 * ((i * 3) % 9)] : [-111 - 0.4 * ((i * 7) % 8), -131 - 0.3 * ((i * 5) % 6)]
}

export type RevisionLot = { part: string; lot: string; effective1: number; effective2: number; retestSerial: string }

function limits(rev: typeof REVISION_1 | typeof REVISION_2) {
  return [
    { step: 'final', name: 'output_power', ...rev.power, unit: 'dBm', required: true, rule: 'simple', defaultUncertainty: null, key: true },
    ...OFFSETS.map((f) => ({ step: 'final', name: 'phase_noise', qualifier: f, usl: rev.mask[f], unit: 'dBc/Hz', required: true, rule: 'simple', defaultUncertainty: null, key: false })),
  ]
}

async function approveRevision(part: string, rev: typeof REVISION_1 | typeof REVISION_2, effectiveAt?: string): Promise<number> {
  const engineer = await signIn('engineer@tercet.test')
  const quality = await signIn('quality@tercet.test')
  const draft = await call('POST', `/api/products/${part}/revisions`, { cookie: engineer })
  expect(draft.status, JSON.stringify(draft.body)).toBe(201)
  const put = await call('PUT', `/api/revisions/${draft.body.id}/limits`, { cookie: engineer, body: { limits: limits(rev) } })
  expect(put.status, JSON.stringify(put.body)).toBe(200)
  const ok = await call('POST', `/api/revisions/${draft.body.id}/approve`, { cookie: quality, body: effectiveAt ? { effectiveAt } : {} })
  expect(ok.status, JSON.stringify(ok.body)).toBe(200)
  return new Date(ok.body.effectiveAt).getTime()
}

async function post(part: string, lot: string, serial: string, at: number, power: number, pn: [number, number]) {
  const token = stationTokens()['ATE-D2-01']!
  const body = {
    id: randomUUID(), serial, partNumber: part, lot, step: 'final',
    startedAt: new Date(at).toISOString(), finishedAt: new Date(at + 500).toISOString(),
    measurements: [
      { name: 'output_power', value: power, unit: 'dBm' },
      ...OFFSETS.map((offsetHz, k) => ({ name: 'phase_noise', offsetHz, value: pn[k], unit: 'dBc/Hz' })),
    ],
  }
  const r = await call('POST', '/api/v1/runs', { token, body })
  expect(r.status, JSON.stringify(r.body)).toBe(201)
  return r.body
}

/**
 * Builds the lot. Revision 2 is approved to take effect a minute after revision 1, so every run's start time says
 * unambiguously which revision judged it, whatever the pace of the test.
 */
export async function buildRevisionLot(tag: string): Promise<RevisionLot> {
  const part = `REV-${tag}`
  const lot = `${part}-L1`
  const engineer = await signIn('engineer@tercet.test')
  const created = await call('POST', '/api/products', { cookie: engineer, body: { partNumber: part, name: 'Revision-change doubler', multiplier: 2, inputHz: 50e6, steps: ['final'] } })
  expect(created.status, JSON.stringify(created.body)).toBe(201)
  const effective1 = await approveRevision(part, REVISION_1)
  const effective2 = effective1 + 60_000
  await approveRevision(part, REVISION_2, new Date(effective2).toISOString())

  for (const [i, p] of POWER_1.entries()) {
    const r = await post(part, lot, `${part}-A${i}`, effective1 + 1000 + i * 1000, p, phaseNoiseOf(1, i))
    expect(r.revision).toBe(1)
  }
  for (const [i, p] of POWER_2.entries()) {
    const r = await post(part, lot, `${part}-B${i}`, effective2 + 1000 + i * 1000, p, phaseNoiseOf(2, i))
    expect(r.revision).toBe(2)
  }
  const retestSerial = `${part}-B0`
  const retest = await post(part, lot, retestSerial, effective2 + 1000 + POWER_2.length * 1000, RETEST_2, phaseNoiseOf(2, 0))
  expect(retest.attempt).toBe(2)
  return { part, lot, effective1, effective2, retestSerial }
}
