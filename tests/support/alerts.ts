// Firings written straight into alert_firings (the evaluator's output shape), and fresh staff accounts to follow them.
import type { Knex } from 'knex'
import { expect } from 'vitest'
import type { AlertFigure } from '../../shared/types/alert'
import { newUser } from './accounts'
import { call, signIn } from './http'

export const ALERT_PASSWORD = 'alert watcher phrase 2026'

export async function productId(db: Knex, partNumber: string): Promise<number> {
  return (await db('products').where({ part_number: partNumber }).first('id')).id
}

export async function insertFiring(db: Knex, f: {
  ruleId: number; productId?: number | null; stationId?: number | null; raisedAt?: Date; summary?: string; subjectLabel?: string
  figures?: AlertFigure[]; link?: string
}): Promise<number> {
  const [id] = await db('alert_firings').insert({
    rule_id: f.ruleId, subject: `test:${Math.random().toString(36).slice(2)}`, subject_label: f.subjectLabel ?? 'test subject',
    product_id: f.productId ?? null, station_id: f.stationId ?? null, summary: f.summary ?? 'raised by a test',
    figures: JSON.stringify(f.figures ?? [{ label: 'Cpk', value: 0.91, unit: null }]), link: f.link ?? '/trends',
    raised_at: f.raisedAt ?? new Date(),
  })
  return Number(id)
}

/** A new staff account signed in: its id and session cookie. */
export async function watcher(admin: string, tag: string, role: 'engineer' | 'operator' = 'engineer'): Promise<{ id: number; cookie: string }> {
  const u = await newUser(admin, { tag, password: ALERT_PASSWORD, name: `Watcher ${tag}`, role })
  return { id: u.id, cookie: await signIn(u.email, ALERT_PASSWORD) }
}

export async function newStation(cookie: string, prefix: string): Promise<number> {
  const r = await call('POST', '/api/stations', { cookie, body: { name: `${prefix}-${Date.now().toString(36).toUpperCase()}` } })
  expect(r.status, JSON.stringify(r.body)).toBe(201)
  return r.body.station.id
}

export async function newRule(cookie: string, body: Record<string, unknown>): Promise<number> {
  const r = await call('POST', '/api/alert-rules', { cookie, body })
  expect(r.status, JSON.stringify(r.body)).toBe(201)
  return r.body.rule.id
}
