import { auditPage } from '../../services/audit-views'
import { underRules } from '../../services/rule-error'

export default defineEventHandler(async (event) => underRules(() => auditPage(useDb(), getQuery(event))))
