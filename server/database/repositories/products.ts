import type { Knex } from 'knex'

export type ProductRecord = {
  id: number; partNumber: string; name: string; multiplier: number; inputHz: number; outputHz: number
  steps: string[]; jitterBandLoHz: number; jitterBandHiHz: number; createdAt: Date; updatedAt: Date
}

export type ProductFields = { partNumber: string; name: string; multiplier: number; inputHz: number; steps: string[]; jitterBandLoHz: number; jitterBandHiHz: number }

function toProduct(r: any): ProductRecord {
  return {
    id: r.id, partNumber: r.part_number, name: r.name, multiplier: r.multiplier, inputHz: r.input_hz, outputHz: r.output_hz,
    steps: Array.isArray(r.steps) ? r.steps : JSON.parse(String(r.steps)),
    jitterBandLoHz: r.jitter_band_lo_hz, jitterBandHiHz: r.jitter_band_hi_hz, createdAt: r.created_at, updatedAt: r.updated_at,
  }
}

export async function findProductByPartNumber(db: Knex, partNumber: string, opts: { forUpdate?: boolean } = {}): Promise<ProductRecord | undefined> {
  const q = db('products').where({ part_number: partNumber }).first()
  const r = await (opts.forUpdate ? q.forUpdate() : q)
  return r ? toProduct(r) : undefined
}

export async function findProductById(db: Knex, id: number): Promise<ProductRecord | undefined> {
  const r = await db('products').where({ id }).first()
  return r ? toProduct(r) : undefined
}

export async function listProductRecords(db: Knex): Promise<ProductRecord[]> {
  return (await db('products').orderBy('part_number')).map(toProduct)
}

export async function insertProduct(db: Knex, p: ProductFields): Promise<number> {
  const [id] = await db('products').insert({
    part_number: p.partNumber, name: p.name, multiplier: p.multiplier, input_hz: p.inputHz, output_hz: p.multiplier * p.inputHz,
    steps: JSON.stringify(p.steps), jitter_band_lo_hz: p.jitterBandLoHz, jitter_band_hi_hz: p.jitterBandHiHz,
  })
  return id!
}

/** Writes the given fields; the output frequency always follows multiplier × input. */
export async function updateProduct(db: Knex, id: number, p: Omit<ProductFields, 'partNumber'>): Promise<void> {
  await db('products').where({ id }).update({
    name: p.name, multiplier: p.multiplier, input_hz: p.inputHz, output_hz: p.multiplier * p.inputHz,
    steps: JSON.stringify(p.steps), jitter_band_lo_hz: p.jitterBandLoHz, jitter_band_hi_hz: p.jitterBandHiHz, updated_at: db.fn.now(3),
  })
}

/** The product's engineering lot patterns as stored, and how many of its lots are engineering lots now. */
export async function engineeringPatternOf(db: Knex, productId: number): Promise<{ pattern: string | null; engineeringLots: number }> {
  const r = await db('products').where({ id: productId }).first('engineering_lot_pattern',
    db('lots').count('*').where({ product_id: productId, engineering: true }).as('engineering_lots'))
  return { pattern: r?.engineering_lot_pattern ?? null, engineeringLots: Number(r?.engineering_lots ?? 0) }
}

export async function updateEngineeringPattern(trx: Knex, productId: number, pattern: string | null): Promise<void> {
  await trx('products').where({ id: productId }).update({ engineering_lot_pattern: pattern })
}
