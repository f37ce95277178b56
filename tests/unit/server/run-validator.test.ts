import Ajv2020 from 'ajv/dist/2020.js'
import addFormats from 'ajv-formats'
import { describe, expect, it } from 'vitest'
import { runBatchSchema as runBatchSchemaJson } from '../../../shared/schemas/run-batch.schema'
import { runSchema as runSchemaJson } from '../../../shared/schemas/run.schema'
import {
  compileSchema,
  runSchema,
  validateRun,
  validateRunBatch,
  type ValidationError,
} from '../../../server/utils/run-validator'

function validRun(): Record<string, unknown> {
  return {
    id: '3f2b8c1e-6a4d-4e0f-9b7a-2c5d8e1f0a93',
    serial: 'TX3-000417',
    partNumber: 'FMX-300-C',
    lot: 'L2024/07-B',
    startedAt: '2024-07-12T08:14:03Z',
    finishedAt: '2024-07-12T08:15:41.250+02:00',
    operator: 'kp',
    software: { sequence: 'tripler-final', version: '2.4.1' },
    conditions: { temperatureC: 25.1, supplyV: 5 },
    stationVerdict: 'pass',
    reference: {
      frequencyHz: 100e6,
      phaseNoise: [
        { offsetHz: 100, value: -125 },
        { offsetHz: 10e3, value: -155 },
      ],
    },
    measurements: [
      { name: 'phase_noise', value: -145.2, unit: 'dBc/Hz', offsetHz: 10e3, uncertainty: 1 },
      { name: 'output_power', value: 13.2, unit: 'dBm', uncertainty: 0.3 },
      { name: 'harmonic_rejection', value: 32.5, unit: 'dB', harmonic: 2 },
      { name: 'output_frequency', value: 300e6, unit: 'Hz' },
      { name: 'lo_leakage', value: -61, unit: 'dBc' },
    ],
    traces: [
      {
        name: 'phase_noise',
        points: [
          [10, -90],
          [100, -112.5],
          [1000, -128],
        ],
      },
    ],
  }
}

function pointers(errors: ValidationError[]): string[] {
  return errors.map((e) => e.pointer)
}

function failWith(body: unknown): ValidationError[] {
  const r = validateRun(body)
  if (r.ok) throw new Error('expected the run to be rejected')
  return r.errors
}

describe('run schema', () => {
  it('compiles under strict mode with all errors', () => {
    const ajv = new Ajv2020({ strict: true, allErrors: true })
    addFormats(ajv)
    expect(() => ajv.addSchema(runSchemaJson).compile(runBatchSchemaJson)).not.toThrow()
    expect(runSchema.$id).toBe('https://tercet.invalid/schemas/run.json')
  })

  it('describes a trace point as the [x, y] pair of numbers the StationRun type states', () => {
    const point = runSchemaJson.$defs.tracePoint
    expect(point.prefixItems.map((p) => p.type)).toEqual(['number', 'number'])
    expect(point.items).toBe(false)
    expect(point.minItems).toBe(2)
  })

  it('leaves unit checks to the service (a wrong unit is a 422 there, not a schema error)', () => {
    const rules = runSchemaJson.$defs.measurement.allOf as unknown as { then: { properties: Record<string, unknown> } }[]
    expect(rules.some((r) => 'unit' in r.then.properties)).toBe(false)
  })
})

describe('validateRun', () => {
  it('accepts a valid run and fills in the default step', () => {
    const r = validateRun(validRun())
    expect(r.ok).toBe(true)
    if (r.ok) {
      expect(r.value.step).toBe('final')
      expect(r.value.measurements).toHaveLength(5)
    }
  })

  it('keeps a given step and accepts a run without optional parts', () => {
    const body = validRun()
    body.step = 'burn-in-2'
    delete body.operator
    delete body.traces
    body.reference = { frequencyHz: 10e6 }
    const r = validateRun(body)
    expect(r.ok).toBe(true)
    if (r.ok) expect(r.value.step).toBe('burn-in-2')
  })

  it('bad uuid → /id', () => {
    expect(failWith({ ...validRun(), id: 'not-a-uuid' })).toEqual([{ pointer: '/id', message: 'must be a valid uuid' }])
  })

  it('missing serial → /serial', () => {
    const body = validRun()
    delete body.serial
    expect(failWith(body)).toEqual([{ pointer: '/serial', message: 'is required' }])
  })

  it('serial with a space, lot with a space, bad step, unknown verdict', () => {
    const errors = failWith({ ...validRun(), serial: 'TX3 417', lot: 'L 1', step: 'Final', stationVerdict: 'marginal' })
    expect(pointers(errors).sort()).toEqual(['/lot', '/serial', '/stationVerdict', '/step'])
    expect(errors.find((e) => e.pointer === '/stationVerdict')!.message).toBe('must be one of "pass", "fail"')
  })

  it('date-time needs a time zone', () => {
    expect(pointers(failWith({ ...validRun(), startedAt: '2024-07-12T08:14:03' }))).toEqual(['/startedAt'])
    expect(pointers(failWith({ ...validRun(), finishedAt: '12/07/2024' }))).toEqual(['/finishedAt'])
  })

  it('phase_noise without offsetHz → /measurements/0/offsetHz', () => {
    const body = validRun()
    body.measurements = [{ name: 'phase_noise', value: -145.2, unit: 'dBc/Hz' }]
    expect(failWith(body)).toEqual([{ pointer: '/measurements/0/offsetHz', message: 'is required' }])
  })

  it('harmonic_rejection without harmonic, or with harmonic 0 or 1.5', () => {
    const body = validRun()
    body.measurements = [
      { name: 'harmonic_rejection', value: 30, unit: 'dB' },
      { name: 'harmonic_rejection', value: 30, unit: 'dB', harmonic: 0 },
      { name: 'harmonic_rejection', value: 30, unit: 'dB', harmonic: 1.5 },
    ]
    expect(pointers(failWith(body))).toEqual(['/measurements/0/harmonic', '/measurements/1/harmonic', '/measurements/2/harmonic'])
  })

  it('a known name in another unit still passes the schema', () => {
    const body = validRun()
    body.measurements = [{ name: 'output_power', value: 0.02, unit: 'W' }]
    expect(validateRun(body).ok).toBe(true)
  })

  it('offsetHz must be > 0, uncertainty ≥ 0, name must fit the pattern', () => {
    const body = validRun()
    body.measurements = [
      { name: 'phase_noise', value: -100, unit: 'dBc/Hz', offsetHz: 0 },
      { name: 'output_power', value: 1, unit: 'dBm', uncertainty: -0.1 },
      { name: 'Output Power', value: 1, unit: 'dBm' },
    ]
    expect(pointers(failWith(body))).toEqual(['/measurements/0/offsetHz', '/measurements/1/uncertainty', '/measurements/2/name'])
  })

  it('extra properties are reported where they are, with the property in the pointer', () => {
    const body = validRun()
    body.colour = 'blue'
    ;(body.software as Record<string, unknown>)['a/b~c'] = 1
    const errors = failWith(body)
    expect(errors).toContainEqual({ pointer: '/colour', message: 'is not an allowed property' })
    expect(errors).toContainEqual({ pointer: '/software/a~1b~0c', message: 'is not an allowed property' })
    expect(errors).toHaveLength(2)
  })

  it('501 measurements → /measurements; none at all too', () => {
    const body = validRun()
    const many = Array.from({ length: 501 }, (_, i) => ({ name: 'output_power', value: i, unit: 'dBm' }))
    body.measurements = many
    expect(failWith(body)).toEqual([{ pointer: '/measurements', message: 'must NOT have more than 500 items' }])
    body.measurements = many.slice(0, 500)
    expect(validateRun(body).ok).toBe(true)
    body.measurements = []
    expect(pointers(failWith(body))).toEqual(['/measurements'])
  })

  it('a trace with 2001 points → /traces/0/points', () => {
    const body = validRun()
    const points = Array.from({ length: 2001 }, (_, i) => [i + 1, -100])
    body.traces = [{ name: 'spectrum', points }]
    expect(failWith(body)).toEqual([{ pointer: '/traces/0/points', message: 'must NOT have more than 2000 items' }])
    body.traces = [{ name: 'spectrum', points: points.slice(0, 2000) }]
    expect(validateRun(body).ok).toBe(true)
  })

  it('trace points are [x > 0, y] pairs and there are at most 8 traces', () => {
    const body = validRun()
    body.traces = [{ name: 'spectrum', points: [[0, -100], [10, -100, 3], [20], [30, 'x']] }]
    expect(pointers(failWith(body))).toEqual([
      '/traces/0/points/0/0',
      '/traces/0/points/1',
      '/traces/0/points/2',
      '/traces/0/points/3/1',
    ])
    body.traces = Array.from({ length: 9 }, () => ({ name: 'spectrum', points: [[1, 1]] }))
    expect(pointers(failWith(body))).toEqual(['/traces'])
  })

  it('reference frequency must be > 0 and at most 64 reference points', () => {
    const body = validRun()
    body.reference = {
      frequencyHz: 0,
      phaseNoise: Array.from({ length: 65 }, (_, i) => ({ offsetHz: i + 1, value: -150 })),
    }
    expect(pointers(failWith(body))).toEqual(['/reference/frequencyHz', '/reference/phaseNoise'])
  })

  it('reports every problem at once', () => {
    const body = validRun()
    body.id = 'nope'
    delete body.serial
    body.extra = true
    body.measurements = [
      { name: 'phase_noise', value: -145.2, unit: 'dBc/Hz' },
      { name: 'output_power', value: 'high', unit: 'dBm' },
    ]
    body.conditions = { temperatureC: 25 }
    expect(pointers(failWith(body)).sort()).toEqual(
      ['/id', '/serial', '/extra', '/conditions/supplyV', '/measurements/0/offsetHz', '/measurements/1/value'].sort(),
    )
  })

  it('a body that is not an object is rejected at the root', () => {
    expect(failWith([1, 2])).toEqual([{ pointer: '', message: 'must be object' }])
    expect(pointers(failWith(null))).toEqual([''])
  })
})

describe('validateRunBatch', () => {
  it('accepts up to 500 runs and points into the failing run', () => {
    const ok = validateRunBatch({ runs: [validRun(), { ...validRun(), step: 'rework' }] })
    expect(ok.ok && ok.value.runs.map((run) => run.step)).toEqual(['final', 'rework'])
    const r = validateRunBatch({ runs: [validRun(), { ...validRun(), id: 'x' }] })
    expect(r.ok).toBe(false)
    if (!r.ok) expect(r.errors).toEqual([{ pointer: '/runs/1/id', message: 'must be a valid uuid' }])
  })

  it('rejects an empty batch, more than 500 runs and extra top-level properties', () => {
    const empty = validateRunBatch({ runs: [] })
    expect(empty.ok ? [] : pointers(empty.errors)).toEqual(['/runs'])
    const run = validRun()
    const tooMany = validateRunBatch({ runs: Array.from({ length: 501 }, () => run) })
    expect(tooMany.ok ? [] : pointers(tooMany.errors)).toEqual(['/runs'])
    const extra = validateRunBatch({ runs: [validRun()], station: 'st-4' })
    expect(extra.ok ? [] : pointers(extra.errors)).toEqual(['/station'])
  })
})

describe('compileSchema', () => {
  it('validates other bodies with the same error form', () => {
    const validate = compileSchema<{ name: string }>({
      $id: 'https://tercet.invalid/schemas/test-only.json',
      type: 'object',
      additionalProperties: false,
      required: ['name'],
      properties: { name: { type: 'string', minLength: 1 } },
    })
    expect(validate({ name: 'x' })).toEqual({ ok: true, value: { name: 'x' } })
    expect(validate({ other: 1 })).toEqual({
      ok: false,
      errors: [
        { pointer: '/name', message: 'is required' },
        { pointer: '/other', message: 'is not an allowed property' },
      ],
    })
  })

  it('can refer to the run schema', () => {
    const validate = compileSchema({
      $id: 'https://tercet.invalid/schemas/test-single.json',
      type: 'object',
      additionalProperties: false,
      required: ['run'],
      properties: { run: { $ref: 'run.json' } },
    })
    const r = validate({ run: { ...validRun(), serial: '' } })
    expect(r.ok ? [] : pointers(r.errors)).toEqual(['/run/serial'])
  })
})

describe('optional parts of a run', () => {
  it('accepts a run with only the required fields and fills the default step', () => {
    const body: Record<string, unknown> = {
      id: '0b6f1a8e-8d7e-4c1a-9a57-3c2f5d9e1b20', serial: 'SN-1', partNumber: 'P-1', lot: 'L-1',
      startedAt: '2026-11-30T10:00:00Z', finishedAt: '2026-11-30T10:01:00Z',
      measurements: [{ name: 'output_power', value: 7.1, unit: 'dBm' }],
    }
    const r = validateRun(body)
    expect(r.ok).toBe(true)
    expect(body.step).toBe('final')
  })
})
