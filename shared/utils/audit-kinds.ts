// What the pages call each kind of audited thing (the audit log stores its table-like name).
const KINDS: Record<string, string> = {
  spec_revision: 'Specification', product: 'Part', lot: 'Lot', unit: 'Unit', test_run: 'Test run', station: 'Station',
  instrument: 'Instrument', calibration_impact: 'Calibration review', certificate: 'Certificate', shipment: 'Shipment',
  customer: 'Customer', user: 'User', alert_rule: 'Alert rule', alert_firing: 'Alert', import_job: 'Import',
  control_baseline: 'Control baseline', app_setting: 'Setting',
}

export function auditKind(entity: string): string {
  return KINDS[entity] ?? entity.replace(/_/g, ' ')
}
