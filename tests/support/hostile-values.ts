// Generators of hostile values shared by the hostile-input suite (fast-check arbitraries, kept cheap).
import fc from 'fast-check'

/**
 * A value JSON.stringify cannot write (-0, 1e400, a 30-digit integer): a marker string in the object, swapped for
 * the raw text by `toJsonText`.
 */
const RAW_PREFIX = '\u0001raw:'
export function raw(text: string): string { return RAW_PREFIX + text }

export function toJsonText(value: unknown): string {
  return JSON.stringify(value).replace(/"\\u0001raw:([^"]*)"/g, (_m, t: string) => t)
}

export const NUMBER_TEXTS = ['NaN', 'Infinity', '-Infinity', '+Infinity', 'nan', '-0', '1e308', '-1e308', '1e400', '0x10', '', ' 1', '1,5', '∞']
export const RAW_NUMBERS = ['1e308', '-1e308', '-0', '1e400', '-1e400', '5e-324', '123456789012345678901234567890', '-0.0', '1E+2', '0.0000000000000000000000001']

export const UNICODE_TEXTS = [
  '\uD800', '\uDFFF', 'a\uD83Db', '\uDE00x', 'A\u0000B', '\u0000', '\u202EKCOL', 'ABC\u200F123', '\u200B', '\uFEFFT3',
  '\u2028\u2029', 'e\u0301\u0301\u0301', '\uFFFF', '\u{10FFFF}', 'Ａ１', 'İı', '🂡🂱', 'T3\u00A0375', '\t\r\n', 'ﷺ'.repeat(40),
]

export const SQL_TEXTS = [
  "' OR '1'='1", "1; DROP TABLE units; --", "'; SELECT SLEEP(10); --", "\" OR \"\"=\"", "x' UNION SELECT password_hash FROM users -- ",
  '%', '_', '\\', "\\'", '%_%', "1' AND (SELECT COUNT(*) FROM information_schema.tables) > 0 #", '0x2720', "admin'/*", '$(reboot)', '{{7*7}}',
]

export const PROTO_KEYS = ['__proto__', 'constructor', 'prototype', 'toString', 'hasOwnProperty', '__defineGetter__', 'valueOf', '__lookupSetter__']

/** Keys no schema of the project names: adding one to a body with `additionalProperties: false` makes it invalid. */
export const FOREIGN_KEYS = [...PROTO_KEYS, 'ID', ' id', 'id\u0000', '', 'x'.repeat(300), '\uD800', '$where', 'a.b', 'a/b', '~0', "'; --"]

/** Nested arrays and objects of the given depth, as text (the engine's own stringify would recurse). */
export function deepText(depth: number, kind: 'array' | 'object' = 'array'): string {
  return kind === 'array' ? '['.repeat(depth) + ']'.repeat(depth) : '{"a":'.repeat(depth) + '1' + '}'.repeat(depth)
}

function deepValue(depth: number): unknown {
  let v: unknown = 1
  for (let i = 0; i < depth; i++) v = i % 2 ? { a: v } : [v]
  return v
}

export const hostileScalar: fc.Arbitrary<unknown> = fc.oneof(
  fc.constantFrom(...NUMBER_TEXTS),
  fc.constantFrom(...RAW_NUMBERS).map(raw),
  fc.constantFrom(null, true, false, 0, -1, 1.5, 2 ** 53 + 2, -(2 ** 31), 4294967296),
  fc.constantFrom(...UNICODE_TEXTS),
  fc.constantFrom(...SQL_TEXTS),
  fc.string({ unit: 'binary', maxLength: 24 }),
  fc.integer({ min: 65, max: 2000 }).map((n) => 'S'.repeat(n)),
  fc.double(),
)

/** A hostile value: a scalar, or a small array/object of them, or a moderately deep nest. */
export const hostileValue: fc.Arbitrary<unknown> = fc.oneof(
  { weight: 6, arbitrary: hostileScalar },
  { weight: 1, arbitrary: fc.array(hostileScalar, { maxLength: 4 }) },
  { weight: 1, arbitrary: fc.dictionary(fc.constantFrom(...FOREIGN_KEYS.filter((k) => k !== '__proto__'), 'name', 'value', 'unit'), hostileScalar, { maxKeys: 3 }) },
  { weight: 1, arbitrary: fc.integer({ min: 2, max: 200 }).map(deepValue) },
)
