import { describe, expect, it } from 'vitest'
import { DEFAULT_BACKOFF, UsageError, loopbackBase, newTally, parseSimArgs, record, retryDelay, stationVerdict, summaryLine } from '../../../scripts/lib/station-sim-core'

const BASE = ['--url', 'http://127.0.0.1:3000', '--token', 'tst_abc', '--part', 'VFW-T3-375', '--lot', 'T3-SIM-01', '--units', '12']

describe('parseSimArgs', () => {
  it('reads every option, in both spellings, with defaults for the optional ones', () => {
    expect(parseSimArgs(BASE, 99)).toEqual({ url: 'http://127.0.0.1:3000', token: 'tst_abc', part: 'VFW-T3-375', lot: 'T3-SIM-01', units: 12, drift: false, seed: 99, batch: 1 })
    const a = parseSimArgs([...BASE, '--drift', '--seed=7', '--batch', '25'])
    expect(a).toMatchObject({ drift: true, seed: 7, batch: 25 })
  })

  it('refuses missing, unknown, repeated and malformed options', () => {
    expect(() => parseSimArgs(BASE.slice(2))).toThrow('--url is required')
    expect(() => parseSimArgs([...BASE, '--colour', 'red'])).toThrow('unknown option --colour')
    expect(() => parseSimArgs([...BASE, '--units', '3'])).toThrow('given twice')
    expect(() => parseSimArgs([...BASE.slice(0, 8), '--units', '2.5'])).toThrow('whole number')
    expect(() => parseSimArgs([...BASE.slice(0, 8), '--units', '0'])).toThrow('between 1 and 10000')
    expect(() => parseSimArgs([...BASE, '--batch', '501'])).toThrow('between 1 and 500')
    expect(() => parseSimArgs([...BASE, '--seed'])).toThrow('--seed needs a value')
    expect(() => parseSimArgs([...BASE, '--drift=yes'])).toThrow('takes no value')
    expect(() => parseSimArgs([...BASE, 'stray'])).toThrow('unexpected argument')
    expect(() => parseSimArgs(['--lot', 'has space', ...BASE.slice(0, 6), '--units', '1'])).toThrow('--lot must be')
    expect(() => parseSimArgs(['--url'])).toThrow(UsageError)
  })
})

describe('loopbackBase', () => {
  it('accepts the loopback names and trims a trailing slash', () => {
    expect(loopbackBase('http://127.0.0.1:3000/')).toBe('http://127.0.0.1:3000')
    expect(loopbackBase('http://localhost:8080')).toBe('http://localhost:8080')
    expect(loopbackBase('http://[::1]:3000/tercet/')).toBe('http://[::1]:3000/tercet')
    expect(loopbackBase('https://LOCALHOST')).toBe('https://localhost')
  })

  it('refuses any other host, scheme or non-URL', () => {
    expect(() => loopbackBase('http://10.0.0.5:3000')).toThrow(/refusing to post to 10\.0\.0\.5/)
    expect(() => loopbackBase('http://tercet.example.com')).toThrow(/only talks to a Tercet on this machine/)
    expect(() => loopbackBase('http://127.0.0.2:3000')).toThrow(/refusing/)
    expect(() => loopbackBase('http://localhost.evil.test')).toThrow(/refusing/)
    expect(() => loopbackBase('ftp://127.0.0.1')).toThrow(/http or https/)
    expect(() => loopbackBase('127.0.0.1:3000')).toThrow()
  })
})

describe('retryDelay', () => {
  it('doubles from the base up to the cap, and stops after the allowed attempts', () => {
    const delays = Array.from({ length: 7 }, (_, i) => retryDelay(i + 1, DEFAULT_BACKOFF))
    expect(delays).toEqual([500, 1000, 2000, 4000, 8000, undefined, undefined])
    expect(retryDelay(0)).toBeUndefined()
  })

  it('waits at least what Retry-After asks, but never above the cap', () => {
    expect(retryDelay(1, DEFAULT_BACKOFF, 3)).toBe(3000)
    expect(retryDelay(4, DEFAULT_BACKOFF, 1)).toBe(4000)
    expect(retryDelay(1, DEFAULT_BACKOFF, 60)).toBe(8000)
    expect(retryDelay(1, DEFAULT_BACKOFF, Number.NaN)).toBe(500)
  })
})

describe('summaryLine', () => {
  it('counts stored, replayed and failed runs by status on one line', () => {
    const t = newTally()
    for (const s of [201, 201, 200, 422, 'network', 422, 503] as const) { t.posted++; record(t, s) }
    t.retests = 1
    const line = summaryLine(t)
    expect(line).toBe('station-sim: posted 7 runs · 201 stored 2 · 200 replayed 1 · retests 1 · failures 422×2, 503×1, network×1')
    expect(line.includes('\n')).toBe(false)
    expect(summaryLine(newTally())).toContain('failures none')
  })
})

describe('stationVerdict', () => {
  const limits = [
    { step: 'final', name: 'output_power', lsl: 6, usl: 8 },
    { step: 'final', name: 'phase_noise', offsetHz: 10_000, lsl: null, usl: -140 },
    { step: 'tune', name: 'output_power', lsl: 7.5, usl: null },
  ]
  const run = (step: string, power: number, noise: number) => ({ step, measurements: [{ name: 'output_power', value: power }, { name: 'phase_noise', offsetHz: 10_000, value: noise }, { name: 'phase_noise', offsetHz: 100, value: 0 }] })

  it('fails a value outside the limits of its own step and qualifier, limits inclusive', () => {
    expect(stationVerdict(limits, run('final', 8, -140))).toBe('pass')
    expect(stationVerdict(limits, run('final', 8.01, -150))).toBe('fail')
    expect(stationVerdict(limits, run('final', 7, -139.9))).toBe('fail')
    // the tune step's own lower limit, and no limit for the 100 Hz offset at all
    expect(stationVerdict(limits, run('tune', 7, 0))).toBe('fail')
    expect(stationVerdict(limits, run('tune', 9, 0))).toBe('pass')
  })
})
