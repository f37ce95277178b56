// A fresh part with an approved limit on output power, and units posted into lots of it, for shipment tests.
import { randomUUID } from 'node:crypto'
import { expect } from 'vitest'
import { call, signIn, ROLE_ACCOUNTS } from './http'
import { stationTokens } from './stations'

export const POWER = { lsl: 8, usl: 12 } as const

export async function makePart(part: string, steps: string[] = ['final']): Promise<void> {
  const engineer = await signIn(ROLE_ACCOUNTS.engineer)
  const quality = await signIn(ROLE_ACCOUNTS.quality)
  const created = await call('POST', '/api/products', { cookie: engineer, body: { partNumber: part, name: 'Shipping test doubler', multiplier: 2, inputHz: 50e6, steps } })
  expect(created.status, JSON.stringify(created.body)).toBe(201)
  const draft = await call('POST', `/api/products/${part}/revisions`, { cookie: engineer })
  expect(draft.status, JSON.stringify(draft.body)).toBe(201)
  const limits = steps.map((step) => ({ step, name: 'output_power', ...POWER, target: 10, unit: 'dBm', required: true, rule: 'simple', defaultUncertainty: null, key: true }))
  expect((await call('PUT', `/api/revisions/${draft.body.id}/limits`, { cookie: engineer, body: { limits } })).status).toBe(200)
  const ok = await call('POST', `/api/revisions/${draft.body.id}/approve`, { cookie: quality, body: {} })
  expect(ok.status, JSON.stringify(ok.body)).toBe(200)
}

let clock = 0
/** Runs get increasing start times from now on (after the revision took effect) unless given one. */
export async function postRun(part: string, lot: string, serial: string, o: { power?: number; step?: string; startedAt?: number; token?: string } = {}) {
  const at = o.startedAt ?? (clock = Math.max(clock + 50, Date.now()))
  const body = {
    id: randomUUID(), serial, partNumber: part, lot, step: o.step ?? 'final',
    startedAt: new Date(at).toISOString(), finishedAt: new Date(at + 500).toISOString(),
    measurements: [{ name: 'output_power', value: o.power ?? 10, unit: 'dBm' }],
  }
  const r = await call('POST', '/api/v1/runs', { token: o.token ?? stationTokens()['ATE-D2-01']!, body })
  expect(r.status, JSON.stringify(r.body)).toBe(201)
  return r.body
}

export async function releaseLot(lot: string, cookie: string, body: Record<string, unknown> = {}) {
  const r = await call('POST', `/api/lots/${lot}/release`, { cookie, body })
  expect(r.status, JSON.stringify(r.body)).toBe(200)
}

export async function firstCustomerId(cookie: string, code = 'QUILL'): Promise<number> {
  const r = await call('GET', '/api/customers', { cookie })
  const c = r.body.customers.find((x: any) => x.code === code) ?? r.body.customers[0]
  return c.id
}
