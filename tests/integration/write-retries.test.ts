import type { Knex } from 'knex'
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { withWriteRetries, writeTransaction } from '../../server/database/write-retries'
import { RuleError } from '../../server/services/rule-error'

// A write transaction the database aborts for a concurrent writer (an InnoDB deadlock here; on a Galera cluster a
// certification failure, which reaches the client as the same error 1213) runs again whole. Two pools stand for two
// app instances; a scratch table of this test's own holds the two rows they fight over.
const table = `zz_write_retries_${process.pid}`
let a: Knex
let b: Knex

beforeAll(async () => {
  a = createKnex(connectionFromEnv(), { min: 0, max: 2 })
  b = createKnex(connectionFromEnv(), { min: 0, max: 2 })
  await a.schema.dropTableIfExists(table)
  await a.schema.createTable(table, (t) => { t.integer('id').primary(); t.integer('n').notNullable() })
})
afterAll(async () => {
  await a.schema.dropTableIfExists(table)
  await a.destroy()
  await b.destroy()
})

beforeEach(async () => {
  await a(table).del()
  await a(table).insert([{ id: 1, n: 0 }, { id: 2, n: 0 }])
})

/** Resolves once `n` parties have called it: the two transactions each hold their first row before asking for the other. */
function barrier(n: number): () => Promise<void> {
  let waiting = 0
  let open!: () => void
  const opened = new Promise<void>((r) => { open = r })
  return () => { if (++waiting === n) open(); return opened }
}

describe('write transactions run again on a write conflict', () => {
  it('two transactions locking two rows in opposite order deadlock; the one aborted runs again and both commits land', async () => {
    const bothHoldOne = barrier(2)
    const attempts = { a: 0, b: 0 }
    const retried: unknown[] = []
    const onRetry = (e: unknown) => { retried.push((e as { code?: string }).code) }
    await Promise.all([
      writeTransaction(a, async (trx) => {
        attempts.a++
        await trx(table).where({ id: 1 }).increment('n', 1)
        if (attempts.a === 1) await bothHoldOne()
        await trx(table).where({ id: 2 }).increment('n', 10)
      }, { onRetry }),
      writeTransaction(b, async (trx) => {
        attempts.b++
        await trx(table).where({ id: 2 }).increment('n', 100)
        if (attempts.b === 1) await bothHoldOne()
        await trx(table).where({ id: 1 }).increment('n', 1000)
      }, { onRetry }),
    ])
    // InnoDB chose one victim: it ran twice, the other once, and the victim's first attempt left nothing behind
    expect(retried).toEqual(['ER_LOCK_DEADLOCK'])
    expect(attempts.a + attempts.b).toBe(3)
    const rows = await a(table).orderBy('id').select('id', 'n')
    expect(rows).toEqual([{ id: 1, n: 1001 }, { id: 2, n: 110 }])
  })

  it('without the helper the same two transactions leave one failed with ER_LOCK_DEADLOCK', async () => {
    const bothHoldOne = barrier(2)
    const results = await Promise.allSettled([
      a.transaction(async (trx) => { await trx(table).where({ id: 1 }).increment('n', 1); await bothHoldOne(); await trx(table).where({ id: 2 }).increment('n', 10) }),
      b.transaction(async (trx) => { await trx(table).where({ id: 2 }).increment('n', 100); await bothHoldOne(); await trx(table).where({ id: 1 }).increment('n', 1000) }),
    ])
    const failed = results.filter((r) => r.status === 'rejected') as PromiseRejectedResult[]
    expect(failed).toHaveLength(1)
    expect(failed[0]!.reason.code).toBe('ER_LOCK_DEADLOCK')
  })

  it('a duplicate key is not retried: it runs once and its error reaches the caller, with nothing written', async () => {
    let attempts = 0
    const e = await writeTransaction(a, async (trx) => {
      attempts++
      await trx(table).where({ id: 2 }).increment('n', 5)
      await trx(table).insert({ id: 1, n: 9 })
    }).catch((x) => x)
    expect(attempts).toBe(1)
    expect(e.code).toBe('ER_DUP_ENTRY')
    expect(await a(table).where({ id: 2 }).first('n')).toEqual({ n: 0 })
  })

  it('a rule refusal is not retried', async () => {
    let attempts = 0
    const e = await writeTransaction(a, async () => { attempts++; throw new RuleError(409, 'refused') }).catch((x) => x)
    expect(attempts).toBe(1)
    expect(e).toBeInstanceOf(RuleError)
  })

  it('inside another transaction it runs once: the deadlock rolled back the enclosing one, which only its owner can run again', async () => {
    let inner = 0
    const e = await a.transaction(async (trx) => {
      await writeTransaction(trx, async () => { inner++; throw Object.assign(new Error('Deadlock found'), { code: 'ER_LOCK_DEADLOCK', errno: 1213 }) })
    }).catch((x) => x)
    expect(inner).toBe(1)
    expect(e.code).toBe('ER_LOCK_DEADLOCK')
  })

  it('gives up after the attempts allowed and answers the last conflict', async () => {
    let attempts = 0
    const e = await withWriteRetries(async () => { attempts++; throw Object.assign(new Error('Deadlock found'), { code: 'ER_LOCK_DEADLOCK', errno: 1213 }) }, { tries: 3, baseMs: 1 }).catch((x) => x)
    expect(attempts).toBe(3)
    expect(e.code).toBe('ER_LOCK_DEADLOCK')
  })
})
