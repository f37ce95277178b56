// A JSON Schema (draft 2020-12, as the run schema uses it) flattened into one row per field for a reference table.
// Only what the run schema uses is read: properties, items, prefixItems, local $ref, and if/then requirements.

export type SchemaRow = {
  /** dotted path from the body; `[]` marks the items of an array */
  path: string
  type: string
  required: boolean
  /** e.g. "pattern ^[a-z]+$", "≥ 0", "1–500 items", "default final" */
  constraints: string[]
  description: string
}

type Node = Record<string, any>

function resolve(root: Node, node: Node | boolean | undefined): Node {
  if (!node || typeof node !== 'object') return {}
  const ref = node.$ref
  if (typeof ref === 'string' && ref.startsWith('#/')) {
    let target: any = root
    for (const part of ref.slice(2).split('/')) target = target?.[part.replace(/~1/g, '/').replace(/~0/g, '~')]
    return { ...resolve(root, target), ...Object.fromEntries(Object.entries(node).filter(([k]) => k !== '$ref')) }
  }
  return node
}

function typeOf(n: Node): string {
  if (Array.isArray(n.prefixItems)) return `array [${n.prefixItems.map((p: Node) => p.type ?? 'any').join(', ')}]`
  if (n.const !== undefined) return typeof n.const
  if (Array.isArray(n.type)) return n.type.join(' | ')
  return n.type ?? (n.enum ? 'enum' : 'any')
}

function span(min: number | undefined, max: number | undefined, what: string): string | null {
  if (min != null && max != null) return min === max ? `exactly ${min} ${what}` : `${min}–${max} ${what}`
  if (min != null) return `at least ${min} ${what}`
  if (max != null) return `at most ${max} ${what}`
  return null
}

function constraintsOf(n: Node): string[] {
  const out: string[] = []
  if (n.format) out.push(`format ${n.format}`)
  if (n.pattern) out.push(`pattern ${n.pattern}`)
  const length = span(n.minLength, n.maxLength, 'characters')
  if (length) out.push(length)
  if (n.minimum != null) out.push(`≥ ${n.minimum}`)
  if (n.exclusiveMinimum != null) out.push(`> ${n.exclusiveMinimum}`)
  if (n.maximum != null) out.push(`≤ ${n.maximum}`)
  if (n.exclusiveMaximum != null) out.push(`< ${n.exclusiveMaximum}`)
  if (n.type === 'array') {
    const items = span(n.minItems, Array.isArray(n.prefixItems) ? undefined : n.maxItems, 'items')
    if (items && !Array.isArray(n.prefixItems)) out.push(items)
    if (n.uniqueItems) out.push('no repeats')
  }
  if (Array.isArray(n.enum)) out.push(`one of ${n.enum.map((v: unknown) => JSON.stringify(v)).join(', ')}`)
  if (n.const !== undefined) out.push(`exactly ${JSON.stringify(n.const)}`)
  if (n.default !== undefined) out.push(`default ${JSON.stringify(n.default)}`)
  if (n.additionalProperties === false && n.properties) out.push('no other fields')
  return out
}

/** Fields a sibling's value makes required (`allOf: [{ if: { properties: { name: { const } } }, then: { required } }]`). */
function conditionalRequirements(n: Node): Map<string, string[]> {
  const out = new Map<string, string[]>()
  for (const branch of (n.allOf ?? []) as Node[]) {
    const cond = branch.if?.properties ?? {}
    const conditions = Object.entries(cond).map(([k, v]: [string, any]) => `${k} is ${JSON.stringify(v?.const)}`)
    for (const field of (branch.then?.required ?? []) as string[]) {
      out.set(field, [...(out.get(field) ?? []), `required when ${conditions.join(' and ')}`])
    }
  }
  return out
}

function walk(root: Node, raw: Node, path: string, required: boolean, rows: SchemaRow[]): void {
  const n = resolve(root, raw)
  if (path) rows.push({ path, type: typeOf(n), required, constraints: constraintsOf(n), description: n.description ?? '' })
  if (n.properties) {
    const req = new Set<string>(n.required ?? [])
    const conditional = conditionalRequirements(n)
    for (const [key, child] of Object.entries(n.properties as Record<string, Node>)) {
      const at = rows.length
      walk(root, child, path ? `${path}.${key}` : key, req.has(key), rows)
      const extra = conditional.get(key)
      if (extra && rows[at]) rows[at].constraints.push(...extra)
    }
  }
  if (n.type === 'array' && n.items && !Array.isArray(n.prefixItems)) {
    const items = resolve(root, n.items)
    // an array of scalars is described by its own row; only its constraints are folded in
    if (items.properties) walk(root, items, `${path}[]`, true, rows)
    else if (rows.length && path) {
      const row = rows[rows.length - 1]!
      row.type = `array of ${typeOf(items)}`
      row.constraints.push(...constraintsOf(items).map((c) => `each ${c}`))
      if (!row.description && items.description) row.description = items.description
    }
  }
}

/** One row per field of the schema, parents before children, in the schema's own order. */
export function schemaRows(schema: Node): SchemaRow[] {
  const rows: SchemaRow[] = []
  walk(schema, schema, '', true, rows)
  return rows
}
