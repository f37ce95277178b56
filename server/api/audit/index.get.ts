import { auditPage } from '../../services/audit-views'
import { parseAuditQuery } from '../../utils/audit-query'

export default defineEventHandler(async (event) => auditPage(useDb(), parseAuditQuery(getQuery(event))))
