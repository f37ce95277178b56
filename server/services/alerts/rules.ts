// Alert rules: created, changed, enabled or disabled by engineering staff, every write audited in its transaction.
import type { Knex } from 'knex'
import type { AlertRuleChange, AlertRuleDto, AlertRuleInput, AlertRuleList } from '../../../shared/types/alert'
import { controlRulesMask, type AlertKind } from '../../../shared/utils/alert-kinds'
import { writeAudit } from '../../database/repositories/audit'
import {
  countFiringsOf, deleteRule, findRule, insertRule, listRules, lockRuleRow, setRuleEnabled, stationChoices, stationExists, updateRule, type AlertRuleRow,
} from '../../database/repositories/alert-rules'
import { findProductByPartNumber } from '../../database/repositories/products'
import { findSourceRevision, listLimitsOf } from '../../database/repositories/spec-revisions'
import type { FieldError } from '../../../shared/types/problem'
import { RuleError } from '../rule-error'
import { checkRuleFields, clearUnused } from './rule-check'
import { writeTransaction } from '../../database/write-retries'

export async function rulesList(db: Knex, filter: { partNumber?: string; kind?: AlertKind }): Promise<AlertRuleList> {
  let productId: number | undefined
  if (filter.partNumber) {
    const p = await findProductByPartNumber(db, filter.partNumber)
    if (!p) return { rules: [], stations: await stationChoices(db) }
    productId = p.id
  }
  const [rules, stations] = await Promise.all([listRules(db, { productId, kind: filter.kind }), stationChoices(db)])
  return { rules, stations }
}

const sameQualifier = (a: number, b: number) => Math.abs(a - b) <= 1e-9 * Math.max(1, Math.abs(a), Math.abs(b))

/**
 * The rule's fields checked against its kind and the catalogue: the product exists, the step is one of its steps, the
 * parameter is one of its approved specification's (in force now, else the next to take effect), the station exists.
 */
async function toRow(db: Knex, input: AlertRuleInput, now: Date): Promise<AlertRuleRow> {
  const errors: FieldError[] = checkRuleFields(input)
  let productId: number | null = null
  if (input.partNumber) {
    const product = await findProductByPartNumber(db, input.partNumber.trim())
    if (!product) errors.push({ pointer: '/partNumber', message: 'is not the part number of a product' })
    else {
      productId = product.id
      if (input.step && !product.steps.includes(input.step)) errors.push({ pointer: '/step', message: `is not a test step of ${product.partNumber} (${product.steps.join(', ')})` })
      else if (input.step && input.parameter) {
        const revision = await findSourceRevision(db, product.id, now)
        const limits = revision ? await listLimitsOf(db, revision.id) : []
        const q = input.qualifier ?? 0
        if (!revision) errors.push({ pointer: '/partNumber', message: `${product.partNumber} has no approved specification to take the parameter from` })
        else if (!limits.some((l) => l.step === input.step && l.name === input.parameter && sameQualifier(l.qualifier, q))) {
          errors.push({ pointer: '/parameter', message: `is not a parameter of rev ${revision.revision} of ${product.partNumber} at step ${input.step}` })
        }
      }
    }
  }
  if (input.stationId && !await stationExists(db, input.stationId)) errors.push({ pointer: '/stationId', message: 'is not a station' })
  if (errors.length) throw new RuleError(422, 'The rule cannot be saved as it stands.', errors)
  const hasParameter = !!input.parameter
  return {
    name: input.name.trim(), kind: input.kind, product_id: productId, station_id: input.stationId ?? null,
    step: input.step ?? null, parameter: input.parameter ?? null, qualifier: hasParameter ? (input.qualifier ?? 0) : null,
    threshold: input.threshold ?? null, window_units: input.windowUnits ?? null, horizon_units: input.horizonUnits ?? null,
    silent_minutes: input.silentMinutes ?? null, control_rules: input.controlRules?.length ? controlRulesMask(input.controlRules) : null,
    enabled: input.enabled ?? true,
  }
}

/** What the audit row keeps of a rule: its fields, not who touched it last. */
function audited(r: AlertRuleDto) {
  const { updatedAt: _at, updatedBy: _by, ...rest } = r
  return rest
}

export async function createRule(db: Knex, actorId: number, input: AlertRuleInput, now = new Date()): Promise<AlertRuleDto> {
  return writeTransaction(db, async (trx) => {
    const id = await insertRule(trx, await toRow(trx, input, now), actorId)
    const rule = (await findRule(trx, id))!
    await writeAudit(trx, { userId: actorId, action: 'create', entity: 'alert_rule', entityId: id, after: audited(rule) })
    return rule
  })
}

function inputOf(r: AlertRuleDto): AlertRuleInput {
  return {
    name: r.name, kind: r.kind, partNumber: r.partNumber, stationId: r.stationId, step: r.step, parameter: r.parameter,
    qualifier: r.qualifier, threshold: r.threshold, windowUnits: r.windowUnits, horizonUnits: r.horizonUnits,
    silentMinutes: r.silentMinutes, controlRules: r.controlRules.length ? r.controlRules : null, enabled: r.enabled,
  }
}

/** Changes the given fields; the rule as changed passes the same checks as a new one. */
export async function changeRule(db: Knex, actorId: number, id: number, change: AlertRuleChange, now = new Date()): Promise<AlertRuleDto> {
  return writeTransaction(db, async (trx) => {
    if (!await lockRuleRow(trx, id)) throw new RuleError(404, 'No such alert rule.')
    const before = (await findRule(trx, id))!
    // switching a rule on or off keeps its fields as they are, even where the specification has changed since
    const onlyEnabled = Object.keys(change).every((k) => k === 'enabled')
    if (onlyEnabled) await setRuleEnabled(trx, id, change.enabled!, actorId)
    else {
      let stored = inputOf(before)
      if (change.kind && change.kind !== before.kind) stored = clearUnused({ ...stored, kind: change.kind })
      await updateRule(trx, id, await toRow(trx, { ...stored, ...change }, now), actorId)
    }
    const after = (await findRule(trx, id))!
    const action = onlyEnabled && change.enabled !== before.enabled ? (change.enabled ? 'enable' : 'disable') : 'update'
    await writeAudit(trx, { userId: actorId, action, entity: 'alert_rule', entityId: id, before: audited(before), after: audited(after) })
    return after
  })
}

/** Deletes a rule that never fired; one that did keeps its history and is disabled instead. */
export async function removeRule(db: Knex, actorId: number, id: number): Promise<void> {
  await writeTransaction(db, async (trx) => {
    if (!await lockRuleRow(trx, id)) throw new RuleError(404, 'No such alert rule.')
    const firings = await countFiringsOf(trx, id)
    if (firings > 0) throw new RuleError(409, `This rule has raised ${firings} alert(s), which keep it as their source: disable it instead of deleting it.`)
    const before = (await findRule(trx, id))!
    await deleteRule(trx, id)
    await writeAudit(trx, { userId: actorId, action: 'delete', entity: 'alert_rule', entityId: id, before: audited(before) })
  })
}
