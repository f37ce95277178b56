import { idParam } from '../../../../utils/route-params'
import { readCsvBody } from '../../../../utils/csv-body'
import { checkDraftAccepts, replaceDraftLimits } from '../../../../services/spec-revisions'
import { underRules } from '../../../../services/rule-error'
import { specLimitsFromCsv } from '../../../../../shared/utils/spec-limits'

/** Replaces a draft's limits from CSV; with ?preview=1 only reports what would be read. Nothing is applied while any row is wrong. */
export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'revision')
  const preview = ['1', 'true', 'yes'].includes(String(getQuery(event).preview ?? ''))
  const db = useDb()
  const { steps } = await underRules(() => checkDraftAccepts(db, id))
  const text = await readCsvBody(event, 1_000_000)
  const parsed = specLimitsFromCsv(text, steps)
  if (preview) return { preview: true, applied: false, rows: parsed.rows, errors: parsed.errors }
  if (parsed.errors.length) {
    throw problem(422, `The file has ${parsed.errors.length} error(s); nothing was imported.`, {
      errors: parsed.errors.map((e) => ({ pointer: e.pointer, message: `row ${e.row}${e.column ? `, ${e.column}` : ''}: ${e.message}` })),
      rowErrors: parsed.errors,
    })
  }
  const limits = await underRules(() => replaceDraftLimits(db, actor.id, id, parsed.rows.map((r) => r.limit), 'limits_import'))
  return { preview: false, applied: true, count: limits.length }
})
