import { describe, expect, it } from 'vitest'
import { schemaRows } from '../../../shared/utils/schema-rows'
import { runSchema } from '../../../shared/schemas/run.schema'

describe('schemaRows', () => {
  it('lists nested fields with their type, requirement and constraints', () => {
    const schema = {
      type: 'object', required: ['a', 'list'], additionalProperties: false,
      properties: {
        a: { type: 'string', pattern: '^x+$', maxLength: 8, description: 'the a' },
        b: { type: 'number', exclusiveMinimum: 0, default: 3 },
        list: { type: 'array', minItems: 1, maxItems: 5, items: { $ref: '#/$defs/item' } },
        tags: { type: 'array', items: { type: 'string', minLength: 1 } },
      },
      $defs: {
        item: {
          type: 'object', required: ['kind'], properties: { kind: { enum: ['p', 'q'] }, n: { type: 'integer', minimum: 1 } },
          allOf: [{ if: { properties: { kind: { const: 'q' } }, required: ['kind'] }, then: { required: ['n'] } }],
        },
      },
    }
    expect(schemaRows(schema)).toEqual([
      { path: 'a', type: 'string', required: true, constraints: ['pattern ^x+$', 'at most 8 characters'], description: 'the a' },
      { path: 'b', type: 'number', required: false, constraints: ['> 0', 'default 3'], description: '' },
      { path: 'list', type: 'array', required: true, constraints: ['1–5 items'], description: '' },
      { path: 'list[]', type: 'object', required: true, constraints: [], description: '' },
      { path: 'list[].kind', type: 'enum', required: true, constraints: ['one of "p", "q"'], description: '' },
      { path: 'list[].n', type: 'integer', required: false, constraints: ['≥ 1', 'required when kind is "q"'], description: '' },
      { path: 'tags', type: 'array of string', required: false, constraints: ['each at least 1 characters'], description: '' },
    ])
  })

  it('covers every field of the run schema, the measurement rules included', () => {
    const rows = schemaRows(runSchema)
    const byPath = new Map(rows.map((r) => [r.path, r]))
    for (const key of Object.keys(runSchema.properties)) expect(byPath.has(key)).toBe(true)
    for (const key of runSchema.required) expect(byPath.get(key)!.required).toBe(true)
    expect(byPath.get('step')!.constraints).toContain('default "final"')
    expect(byPath.get('id')!.constraints).toContain('format uuid')
    expect(byPath.get('measurements')!.constraints).toContain('1–500 items')
    expect(byPath.get('measurements[].offsetHz')!.constraints).toContain('required when name is "phase_noise"')
    expect(byPath.get('measurements[].harmonic')!.constraints).toContain('required when name is "harmonic_rejection"')
    expect(byPath.get('traces[].points')!.type).toBe('array of array [number, number]')
    expect(byPath.get('instrumentAssets')!.type).toBe('array of string')
    expect(byPath.get('conditions.temperatureC')!.constraints).toContain('≥ -273.15')
  })
})
