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

  it('hashes a reordered body the same and a changed body differently', () => {
    const a = { id: 'r1', measurements: [{ name: 'output_power', value: 7 }] }
    const b = { measurements: [{ value: 7, name: 'output_power' }], id: 'r1' }
    expect(bodyHash(a)).toBe(bodyHash(b))
    expect(bodyHash(a)).not.toBe(bodyHash({ ...a, measurements: [{ name: 'output_power', value: 7.01 }] }))
  })
})
