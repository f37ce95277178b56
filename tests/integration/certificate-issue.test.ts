import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { issueCertificates, revokeCertificates } from '../../server/services/certificates/issue'
import { normaliseVerifyCode } from '../../server/services/certificates/verify-code'
import type { CertificateSnapshot } from '../../shared/types/certificate'
import { testedShipment, TRIPLER, type CertifiedSet } from '../support/certified-units'

let db: Knex
let set: CertifiedSet
const tag = `CI${Date.now().toString(36).toUpperCase()}`

const row = (id: number) => db('certificates').where({ id }).first()
const snapshotOf = async (id: number): Promise<CertificateSnapshot> => JSON.parse((await row(id)).snapshot)
const certified = async (unitId: number) => !!(await db('units').where({ id: unitId }).first('certified')).certified

beforeAll(async () => {
  db = createKnex(connectionFromEnv(), { min: 0, max: 4 })
  set = await testedShipment(db, { tag, count: 4 })
})
afterAll(async () => { await db.destroy() })

describe('issuing certificates', () => {
  it('gives consecutive numbers of the year and distinct 128-bit verification codes', () => {
    const year = new Date().getUTCFullYear()
    const numbers = set.issued.map((c) => c.number)
    for (const n of numbers) expect(n).toMatch(new RegExp(`^VFW-C-${year}-\\d{6}$`))
    const seq = numbers.map((n) => Number(n.slice(-6)))
    expect(seq).toEqual(seq.map((_, i) => seq[0]! + i))
    const codes = set.issued.map((c) => c.verifyCode)
    expect(new Set(codes).size).toBe(codes.length)
    // 26 symbols of 5 bits in groups of four, read back unchanged
    for (const c of codes) {
      expect(c).toMatch(/^([2-9A-HJ-NP-Z]{4}-){6}[2-9A-HJ-NP-Z]{2}$/)
      expect(normaliseVerifyCode(c.toLowerCase().replace(/-/g, ''))).toBe(c)
    }
  })

  it('freezes what the certificate states: the latest final run by test time, its revision, instruments and key characteristics', async () => {
    const c = set.issued[0]!
    const s = await snapshotOf(c.certificateId)
    const unit = set.units.find((u) => u.unitId === c.unitId)!
    expect(s.unit.serial).toBe(unit.serial)
    expect(s.test.runId).toBe(unit.finalRunUuid)
    expect(s.test.station).toBe('ATE-T3-01')
    // text beyond ASCII survives the trip into the row
    expect(s.product.name).toBe(TRIPLER.name)
    expect(TRIPLER.name).toContain('→')
    expect(s.customer.code).toBe('QUILL')
    expect(s.shipment.customerPo).toBe(`PO-${tag}`)
    expect(s.verifyUrl).toMatch(new RegExp(`/verify/${c.verifyCode}$`))
    expect(s.attempts.map((a) => [a.step, a.attempts])).toEqual(TRIPLER.steps.map((step) => [step, 1]))
    expect(s.specification.revision).toBeGreaterThan(0)
    expect(s.instruments.length).toBeGreaterThan(0)
    for (const i of s.instruments) expect(i.dueAt).toMatch(/^\d{4}-\d{2}-\d{2}T/)
    // every key characteristic of the demo tripler's final step, as judged
    const keys = TRIPLER.limits.filter((l) => l.key && l.step === 'final' && l.name !== 'integrated_jitter')
    for (const k of keys) {
      const got = s.characteristics.find((x) => x.name === k.name && x.qualifier === (k.qualifier ?? 0))
      expect(got, `${k.name} ${k.qualifier ?? ''}`).toBeDefined()
      expect(got!.lsl).toBe(k.lsl ?? null)
      expect(got!.usl).toBe(k.usl ?? null)
      expect(got!.rule).toBe(k.rule ?? 'simple')
    }
    const power = s.characteristics.find((x) => x.name === 'output_power')!
    // the generator posts output power with its own expanded uncertainty 0.3 dB: a guarded rule takes that as the band
    expect(power.guardBand).toBe(0.3)
    expect(s.jitter).toMatchObject({ fromHz: 1e3, toHz: 1e6 })
    expect(s.jitter!.valueS).toBeGreaterThan(0)
  })

  it('states f_out = N · f_in and the reference + 20·log10(N) line (×3 → +9.54 dB)', async () => {
    const s = await snapshotOf(set.issued[1]!.certificateId)
    // common practice: an ideal ×N multiplier puts its output at N times its input frequency
    expect(s.product).toMatchObject({ multiplication: 3, inputFrequencyHz: 125e6, outputFrequencyHz: 375e6 })
    const run = await db('test_runs').where({ uuid: s.test.runId }).first('reference')
    const ref = (typeof run.reference === 'string' ? JSON.parse(run.reference) : run.reference).phaseNoise as { offsetHz: number; value: number }[]
    // common practice: an ideal ×N multiplier raises phase noise by 20·log10(N) dB; 20·log10(3) = 9.542 dB
    for (const p of s.phaseNoise!.referencePlusN!) {
      const r = ref.find((x) => x.offsetHz === p.offsetHz)!
      expect(p.dBcHz - r.value).toBeCloseTo(9.542, 3)
    }
    // the mask is the spec's spot limits in offset order (the demo tripler's final step)
    const spots = TRIPLER.limits.filter((l) => l.name === 'phase_noise' && l.step === 'final').map((l) => ({ offsetHz: l.qualifier!, dBcHz: l.usl! }))
    expect(s.phaseNoise!.mask).toEqual(spots)
    expect(s.phaseNoise!.trace!.length).toBe(41)
    expect(s.phaseNoise!.measured.map((p) => p.offsetHz)).toEqual([100, 1e3, 1e4, 1e5, 1e6])
  })

  it('marks the units certified', async () => {
    for (const u of set.units) expect(await certified(u.unitId)).toBe(true)
  })

  it('refuses a second valid certificate for a unit unless it supersedes the first', async () => {
    const u = set.issued[2]!
    await expect(db.transaction((trx) => issueCertificates(trx, { shipmentId: set.shipmentId, issuedBy: set.qualityId, now: new Date(), units: [{ unitId: u.unitId }] })))
      .rejects.toMatchObject({ status: 409 })
  })

  it('supersedes the predecessor in the same transaction, and a failed issue leaves nothing and takes no number', async () => {
    const old = set.issued[2]!
    const year = new Date().getUTCFullYear()
    const before = (await db('certificate_sequences').where({ year }).first('last_number')).last_number
    await expect(db.transaction(async (trx) => {
      await issueCertificates(trx, { shipmentId: set.shipmentId, issuedBy: set.qualityId, now: new Date(), units: [{ unitId: old.unitId, supersedesId: old.certificateId }] })
      throw new Error('caller failed after issuing')
    })).rejects.toThrow('caller failed')
    expect((await db('certificate_sequences').where({ year }).first('last_number')).last_number).toBe(before)
    expect((await row(old.certificateId)).status).toBe('valid')

    const now = new Date()
    const [fresh] = await db.transaction((trx) => issueCertificates(trx, { shipmentId: set.shipmentId, issuedBy: set.qualityId, now, units: [{ unitId: old.unitId, supersedesId: old.certificateId }] }))
    const prev = await row(old.certificateId)
    expect(prev).toMatchObject({ status: 'superseded', status_changed_by: set.qualityId, status_reason: `Superseded by ${fresh!.number}.` })
    expect(new Date(prev.status_changed_at).getTime()).toBe(now.getTime())
    expect((await row(fresh!.certificateId)).supersedes_id).toBe(old.certificateId)
    expect((await snapshotOf(fresh!.certificateId)).supersedes).toBe(old.number)
    expect(Number(fresh!.number.slice(-6))).toBe(before + 1)
    expect(await certified(old.unitId)).toBe(true)

    // revoking the successor leaves the unit with no valid certificate
    await db.transaction((trx) => revokeCertificates(trx, { certificateIds: [fresh!.certificateId], by: set.qualityId, reason: 'Returned unit', now: new Date() }))
    expect((await row(fresh!.certificateId)).status).toBe('revoked')
    expect(await certified(old.unitId)).toBe(false)
  })

  it('revoking one of two units leaves the other certified', async () => {
    const [a, b] = [set.issued[0]!, set.issued[3]!]
    await db.transaction((trx) => revokeCertificates(trx, { certificateIds: [a.certificateId], by: null, reason: 'Customer return', now: new Date() }))
    expect(await certified(a.unitId)).toBe(false)
    expect(await certified(b.unitId)).toBe(true)
    expect((await row(a.certificateId))).toMatchObject({ status: 'revoked', status_reason: 'Customer return' })
  })
})
