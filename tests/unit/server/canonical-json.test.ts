import { describe, expect, it } from 'vitest'
import { bodyHash, canonicalJson } from '../../../server/services/ingest/canonical'

describe('canonicalJson', () => {
  it('sorts keys at every depth and keeps array order', () => {
    expect(canonicalJson({ b: 1, a: { d: [3, 1], c: 'x' } })).toBe('{"a":{"c":"x","d":[3,1]},"b":1}')
  })

  it('drops undefined members but keeps null', () => {
    expect(canonicalJson({ a: undefined, b: null })).toBe('{"b":null}')
  })

  it('agrees with JSON.parse: the canonical text reads back as the same value', () => {
    const v = { z: [{ y: 1.5e-12, x: 'é"\\n' }, true, null], a: -0.1 }
    expect(JSON.parse(canonicalJson(v))).toEqual(v)
  })

  it('writes exactly the text of the key-by-key canonical form used for the hashes already stored', () => {
    // the former writer, kept here as the reference: keys sorted at every depth, written one by one
    const reference = (v: unknown): string => {
      if (Array.isArray(v)) return `[${v.map(reference).join(',')}]`
      if (v && typeof v === 'object') {
        return `{${Object.keys(v).sort().filter((k) => (v as any)[k] !== undefined).map((k) => `${JSON.stringify(k)}:${reference((v as any)[k])}`).join(',')}}`
      }
      return JSON.stringify(v)
    }
    const run = {
      serial: 'S-1', id: '3f2b8c1e-6a4d-4e0f-9b7a-2c5d8e1f0a93', measurements: [{ value: -147.25, unit: 'dBc/Hz', offsetHz: 10000, name: 'phase_noise', uncertainty: 1 }],
      reference: { phaseNoise: [{ value: -160, offsetHz: 100 }], frequencyHz: 125e6 }, traces: [{ points: [[100, -120.5], [1e6, -160]], name: 'phase_noise_sweep' }],
      conditions: { supplyV: 5, temperatureC: 24.9 }, stationVerdict: 'pass', lot: 'L-1', startedAt: '2026-12-01T08:00:00Z',
    }
    expect(canonicalJson(run)).toBe(reference(run))
  })

  it('hashes a reordered body the same and a changed body differently', () => {
    const a = { id: 'r1', measurements: [{ name: 'output_power', value: 7 }] }
    const b = { measurements: [{ value: 7, name: 'output_power' }], id: 'r1' }
    expect(bodyHash(a)).toBe(bodyHash(b))
    expect(bodyHash(a)).not.toBe(bodyHash({ ...a, measurements: [{ name: 'output_power', value: 7.01 }] }))
  })
})
