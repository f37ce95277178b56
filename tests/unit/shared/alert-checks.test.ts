import { linearRegression as ssLinearRegression, mean as ssMean } from 'simple-statistics'
import { describe, expect, it } from 'vitest'
import {
  chartBasis, checkCalibrationDue, checkControlRule, checkCpkLow, checkDriftTowardLimit, checkStationBias, checkStationSilent, checkYieldLow,
  type AlertPoint,
} from '../../../shared/utils/alert-checks'
import { gaussian, mulberry32 } from '../helpers/prng'

const T0 = Date.UTC(2026, 11, 2, 8, 0, 0)
const points = (values: readonly number[], stations: readonly number[] = [1]): AlertPoint[] => values.map((value, i) => {
  const s = stations[i % stations.length]!
  return { value, at: new Date(T0 + i * 60_000), runId: `run-${i}`, serial: `SN-${i}`, stationId: s, station: `ATE-${s}`, lotId: 1, lot: 'L-1' }
})
const figure = (r: { figures: { label: string; value: unknown }[] }, label: string) => r.figures.find((f) => f.label === label)?.value

describe('first-pass yield low', () => {
  // hand count: 17 of 20 first attempts passed = 85 %
  const units = Array.from({ length: 20 }, (_, i) => ![3, 9, 14].includes(i))
  it('fires below the threshold over a full window', () => {
    const r = checkYieldLow(units, { threshold: 90, windowUnits: 20 })
    expect(r.fired).toBe(true)
    expect(figure(r, 'First-pass yield')).toBe(85)
    expect(figure(r, 'Passed first time')).toBe(17)
  })
  it('stays quiet at the threshold, and on a window not yet full', () => {
    expect(checkYieldLow(units, { threshold: 85, windowUnits: 20 }).fired).toBe(false)
    expect(checkYieldLow(units.slice(0, 12), { threshold: 99, windowUnits: 20 }).fired).toBe(false)
  })
  it('looks at the last N units only (hand count: the last 10 hold one failure, 90 %)', () => {
    const r = checkYieldLow(units, { threshold: 95, windowUnits: 10 })
    expect(figure(r, 'First-pass yield')).toBe(90)
    expect(r.fired).toBe(true)
  })
})

describe('Cpk low', () => {
  const g = gaussian(mulberry32(77))
  const values = Array.from({ length: 40 }, () => 10 + 0.25 * g())
  const limits = { lsl: 9, usl: 11 }
  // reference: simple-statistics mean and mean moving range; d2 for n = 2 is 2/√π (tables print 1.128)
  const mrs = values.slice(1).map((v, i) => Math.abs(v - values[i]!))
  const sigma = ssMean(mrs) / (2 / Math.sqrt(Math.PI))
  const m = ssMean(values)
  const reference = Math.min(limits.usl - m, m - limits.lsl) / (3 * sigma)

  it('computes the Cpk of the window as the reference does', () => {
    const r = checkCpkLow(values, limits, { threshold: 0, windowUnits: 40 })
    expect(figure(r, 'Cpk') as number).toBeCloseTo(reference, 2)
  })
  it('fires just below the reference value and stays quiet just above it', () => {
    expect(checkCpkLow(values, limits, { threshold: reference + 0.01, windowUnits: 40 }).fired).toBe(true)
    expect(checkCpkLow(values, limits, { threshold: reference - 0.01, windowUnits: 40 }).fired).toBe(false)
  })
  it('stays quiet with too few values or no limits', () => {
    expect(checkCpkLow(values.slice(0, 8), limits, { threshold: 99, windowUnits: 8 }).fired).toBe(false)
    expect(checkCpkLow(values.slice(0, 30), limits, { threshold: 99, windowUnits: 40 }).fired).toBe(false)
    expect(checkCpkLow(values, { lsl: null, usl: null }, { threshold: 99, windowUnits: 40 }).fired).toBe(false)
  })
})

// Western Electric rules (WE Statistical Quality Control Handbook 1956; NIST/SEMATECH e-Handbook §6.3.2) on a chart
// with centre 0 and σ 1, so each value is its own distance from the centre in σ.
describe('control-chart rules', () => {
  const unit = { centre: 0, sigma: 1, source: 'baseline' as const }
  const check = (values: number[], rules: number[]) => checkControlRule(points(values), { rules, windowUnits: 50 }, unit, null)
  it('rule 1: one point beyond 3σ fires; 2.99σ does not', () => {
    expect(check([0.1, -0.2, 3.1], [1]).fired).toBe(true)
    expect(check([0.1, -0.2, 2.99], [1]).fired).toBe(false)
  })
  it('rule 2: two of three beyond 2σ on one side fire; two of four, or on opposite sides, do not', () => {
    expect(check([0, 2.1, 0.5, 2.2], [2]).fired).toBe(true)
    expect(check([2.1, 0.5, 0.3, 2.2], [2]).fired).toBe(false)
    expect(check([0, -2.1, 0.5, 2.2], [2]).fired).toBe(false)
  })
  it('rule 3: four of five beyond 1σ on one side fire; three of five do not', () => {
    expect(check([1.1, 1.2, 0.5, 1.3, 1.4], [3]).fired).toBe(true)
    expect(check([1.1, 1.2, 0.5, 0.9, 1.4], [3]).fired).toBe(false)
  })
  it('rule 4: eight in a row on one side fire; seven, or eight with one on the centre line, do not', () => {
    expect(check([-0.5, 0.2, 0.3, 0.1, 0.4, 0.2, 0.3, 0.5, 0.1], [4]).fired).toBe(true)
    expect(check([-0.5, 0.2, 0.3, 0.1, 0.4, 0.2, 0.3, 0.5], [4]).fired).toBe(false)
    expect(check([0.2, 0.3, 0.1, 0, 0.4, 0.2, 0.3, 0.5], [4]).fired).toBe(false)
  })
  it('watches only the rules asked for', () => {
    expect(check([1.1, 1.2, 0.5, 1.3, 1.4], [1, 2, 4]).fired).toBe(false)
  })
  it('fires once on a point: a later evaluation ignores hits at or before the point fired about, and fires on a new one', () => {
    const series = [0.1, 3.2, 0.2, -0.1]
    const first = checkControlRule(points(series), { rules: [1], windowUnits: 50 }, unit, null)
    expect(first.fired).toBe(true)
    expect(first.point!.runId).toBe('run-1')
    expect(checkControlRule(points(series), { rules: [1], windowUnits: 50 }, unit, first.point!.at).fired).toBe(false)
    const later = checkControlRule(points([...series, -3.5]), { rules: [1], windowUnits: 50 }, unit, first.point!.at)
    expect(later.point!.runId).toBe('run-4')
  })
  it('without a baseline takes centre and σ = MR̄/d2 from the window (hand: x̄ 11.6, MR̄ 1.5, σ 1.5/1.128)', () => {
    const b = chartBasis([10, 12, 11, 13, 12])!
    expect(b.source).toBe('window')
    expect(b.centre).toBeCloseTo(11.6, 12)
    expect(b.sigma).toBeCloseTo(1.5 / 1.128, 3)
    expect(chartBasis([10, 12], { centre: 5, sigma: 0.5 })).toEqual({ centre: 5, sigma: 0.5, source: 'baseline' })
  })
})

describe('drift toward a limit', () => {
  // a steady rise of 0.05 per unit with a repeating wobble; reference line from simple-statistics with x = 1…N
  const ys = Array.from({ length: 20 }, (_, i) => 10 + 0.05 * (i + 1) + [0.03, -0.02, 0.01, -0.04, 0.02][i % 5]!)
  const ref = ssLinearRegression(ys.map((y, i) => [i + 1, y]))
  const limits = { lsl: 8, usl: 12 }
  it('fires when the line reaches the USL within the horizon, with the reference slope and projection', () => {
    const r = checkDriftTowardLimit(ys, limits, { windowUnits: 20, horizonUnits: 30 })
    expect(r.fired).toBe(true)
    expect(figure(r, 'Slope') as number).toBeCloseTo(ref.m, 4)
    expect(figure(r, 'Projected in 30 units') as number).toBeCloseTo(ref.b + ref.m * 50, 4)
    expect(figure(r, 'USL')).toBe(12)
    expect(figure(r, 'Units to crossing')).toBe(Math.ceil((12 - (ref.b + ref.m * 20)) / ref.m))
  })
  it('stays quiet when the horizon ends short of the limit, or the fit is already outside', () => {
    const crossing = Math.ceil((12 - (ref.b + ref.m * 20)) / ref.m)
    expect(checkDriftTowardLimit(ys, limits, { windowUnits: 20, horizonUnits: crossing - 1 }).fired).toBe(false)
    expect(checkDriftTowardLimit(ys, { lsl: 8, usl: 10.5 }, { windowUnits: 20, horizonUnits: 30 }).fired).toBe(false)
    expect(checkDriftTowardLimit(ys, { lsl: 8, usl: null }, { windowUnits: 20, horizonUnits: 1000 }).fired).toBe(false)
  })
  it('watches the LSL on a falling trend', () => {
    const falling = ys.map((y) => 20 - y)
    expect(checkDriftTowardLimit(falling, { lsl: 8, usl: 12 }, { windowUnits: 20, horizonUnits: 40 }).fired).toBe(true)
  })
})

describe('station bias', () => {
  // station 1 reads 10.0 on average, station 2 10.5 (hand means of five values each)
  const values = [9.9, 10.4, 10.1, 10.6, 10.0, 10.5, 9.8, 10.3, 10.2, 10.7]
  it('fires for each station whose mean differs from the others by more than the threshold', () => {
    const r = checkStationBias(points(values, [1, 2]), { threshold: 0.3, windowUnits: 10 })
    expect(r.map((s) => [s.key, s.fired])).toEqual([['station:1', true], ['station:2', true]])
    expect(figure(r[0]!, 'Difference') as number).toBeCloseTo(-0.5, 10)
  })
  it('stays quiet at the threshold and with too few values on a station', () => {
    expect(checkStationBias(points(values, [1, 2]), { threshold: 0.5, windowUnits: 10 }).some((s) => s.fired)).toBe(false)
    expect(checkStationBias(points(values.slice(0, 9), [1, 2]), { threshold: 0.1, windowUnits: 10 })).toEqual([])
  })
})

describe('calibration due', () => {
  const now = new Date(T0)
  const at = (days: number) => new Date(T0 + days * 86_400_000)
  const held = (dueAt: Date | null, id = 1) => ({ instrumentId: id, assetNumber: `VFW-${id}`, stationId: 3, station: 'ATE-3', dueAt })
  it('fires for an instrument due within the period, or past due, once per due date', () => {
    const [r] = checkCalibrationDue([held(at(10))], now, 30)
    expect(r!.fired).toBe(true)
    expect(r!.key).toBe(`instrument:1/due:${at(10).toISOString().slice(0, 10)}`)
    expect(figure(r!, 'Days left')).toBe(10)
    expect(checkCalibrationDue([held(at(-2))], now, 30)).toHaveLength(1)
    const [late] = checkCalibrationDue([held(at(-3.6))], now, 30)
    expect(figure(late!, 'Days overdue')).toBe(3)
    expect(late!.figures.some((f) => f.label === 'Days left')).toBe(false)
  })
  it('stays quiet beyond the period', () => {
    expect(checkCalibrationDue([held(at(31))], now, 30)).toEqual([])
    expect(checkCalibrationDue([held(at(31))], now, 45)).toHaveLength(1)
  })
})

describe('station silent', () => {
  const now = new Date(T0)
  const station = (minutesAgo: number, lots = ['T3-2612-B']) => ({ stationId: 4, station: 'ATE-4', lastRunId: 77, lastRunAt: new Date(T0 - minutesAgo * 60_000), openLotsRecently: lots })
  it('fires after more than the allowed minutes with an open lot, once per silence', () => {
    const [r] = checkStationSilent([station(61)], now, 60)
    expect(r!.key).toBe('station:4/after-run:77')
  })
  it('stays quiet within the minutes or with no open lot', () => {
    expect(checkStationSilent([station(59)], now, 60)).toEqual([])
    expect(checkStationSilent([station(600, [])], now, 60)).toEqual([])
  })
})
