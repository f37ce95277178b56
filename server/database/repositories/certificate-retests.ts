// What a run stored after a unit's certificate was issued does to it: a failing retest revokes the certificate at
// once; a passing one leaves it valid, noted as waiting for quality to reissue it. Written by the run's own
// transaction, so no run is ever stored without its consequence for the certificate.
import type { RunRef, Statement } from './run-writes'

export type Retest = { unitId: number; stationId: number; step: string; runId: RunRef; uuid: string; verdict: 'pass' | 'fail' }

/**
 * The statements for the retests of one group. The audit rows are written first, from the certificates as they
 * stand, so each names the certificate it concerns; then the certificates and the units' flag change.
 */
export function retestStatements(retests: Retest[]): Statement[] {
  const out: Statement[] = []
  for (const r of retests) {
    const after = r.verdict === 'fail'
      ? { status: 'revoked', reason: `A retest at ${r.step} failed after issue.`, run: r.uuid }
      : { status: 'valid', retest: 'passed; waiting for reissue', step: r.step, run: r.uuid }
    out.push({
      sql: `INSERT INTO audit_log (user_id, station_id, action, entity, entity_id, \`before\`, \`after\`)
        SELECT NULL, ?, ?, 'certificate', number, JSON_OBJECT('status', status), ? FROM certificates WHERE unit_id = ? AND status = 'valid'`,
      values: [r.stationId, r.verdict === 'fail' ? 'revoke' : 'retest', JSON.stringify(after), r.unitId],
    })
    if (r.verdict === 'fail') {
      out.push({
        sql: `UPDATE certificates SET status = 'revoked', status_changed_at = UTC_TIMESTAMP(3), status_changed_by = NULL, status_reason = ?, retest_run_id = ?
          WHERE unit_id = ? AND status = 'valid'`,
        values: [after.reason, r.runId, r.unitId],
      })
      out.push({ sql: 'UPDATE units SET certified = 0 WHERE id = ?', values: [r.unitId] })
    } else {
      out.push({ sql: `UPDATE certificates SET retest_run_id = ? WHERE unit_id = ? AND status = 'valid'`, values: [r.runId, r.unitId] })
    }
  }
  return out
}
