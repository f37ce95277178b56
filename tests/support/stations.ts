import { readFileSync } from 'node:fs'
import { randomUUID } from 'node:crypto'

/** Tokens of the demo stations seeded into the test database. */
export function stationTokens(): Record<string, string> {
  const file = process.env.TERCET_TEST_TOKENS
  if (!file) throw new Error('TERCET_TEST_TOKENS is not set: run the suite with npm test')
  return JSON.parse(readFileSync(file, 'utf8'))
}

let serialCounter = 0
export function uniqueSerial(prefix = 'TS'): string {
  serialCounter += 1
  return `${prefix}-${Date.now().toString(36)}-${process.pid.toString(36)}-${serialCounter}`
}

/** A minimal final-step run of the demo tripler that passes its spec. */
export function tripleRun(overrides: Record<string, unknown> = {}) {
  const started = new Date(Date.now() - 120_000)
  return {
    id: randomUUID(),
    serial: uniqueSerial(),
    partNumber: 'VFW-T3-375',
    lot: 'T3-E2E-01',
    step: 'final',
    startedAt: started.toISOString(),
    finishedAt: new Date(started.getTime() + 90_000).toISOString(),
    stationVerdict: 'pass',
    measurements: [
      { name: 'output_power', value: 7.0, unit: 'dBm', uncertainty: 0.3 },
      { name: 'output_frequency', value: 375_000_150, unit: 'Hz' },
      { name: 'harmonic_rejection', harmonic: 1, value: 38, unit: 'dB' },
      { name: 'harmonic_rejection', harmonic: 2, value: 33, unit: 'dB' },
      { name: 'harmonic_rejection', harmonic: 4, value: 45, unit: 'dB' },
      { name: 'supply_current', value: 78, unit: 'mA' },
      { name: 'phase_noise', offsetHz: 100, value: -117, unit: 'dBc/Hz', uncertainty: 1 },
      { name: 'phase_noise', offsetHz: 1000, value: -137, unit: 'dBc/Hz', uncertainty: 1 },
      { name: 'phase_noise', offsetHz: 10000, value: -147, unit: 'dBc/Hz', uncertainty: 1 },
      { name: 'phase_noise', offsetHz: 100000, value: -152, unit: 'dBc/Hz', uncertainty: 1 },
      { name: 'phase_noise', offsetHz: 1000000, value: -154, unit: 'dBc/Hz', uncertainty: 1 },
    ],
    ...overrides,
  }
}

/** A final-step run of a one-step part with only its output power, started at `at` (ms), a new serial each time. */
export function outputPowerRun(part: string, lot: string, at: number, power: number) {
  return {
    id: randomUUID(), serial: `${part}-${randomUUID().slice(0, 8)}`, partNumber: part, lot, step: 'final',
    startedAt: new Date(at).toISOString(), finishedAt: new Date(at + 500).toISOString(),
    measurements: [{ name: 'output_power', value: power, unit: 'dBm' }],
  }
}
