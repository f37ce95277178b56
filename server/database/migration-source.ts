import type { Knex } from 'knex'
import * as m001 from './migrations/20261201_001_identity'
import * as m002 from './migrations/20261201_002_catalogue'
import * as m003 from './migrations/20261201_003_stations'
import * as m004 from './migrations/20261201_004_results'
import * as m005 from './migrations/20261201_005_aggregates'
import * as m006 from './migrations/20261201_006_shipping'
import * as m007 from './migrations/20261201_007_alerts_audit'
import * as m008 from './migrations/20261201_008_imports'
import * as m009 from './migrations/20261201_009_control_baselines'
import * as m010 from './migrations/20261201_010_stats_pending'
import * as m011 from './migrations/20261202_011_import_cancel'
import * as m012 from './migrations/20261202_012_test_order'
import * as m013 from './migrations/20261202_013_attempts_by_test_time'
import * as m014 from './migrations/20261202_014_calibration_history'
import * as m015 from './migrations/20261202_015_measurement_offset'
import * as m016 from './migrations/20261202_016_shipments_certificates'
import * as m018 from './migrations/20261202_018_shipment_part'
import * as m020 from './migrations/20261202_020_mail_outbox'
import * as m021 from './migrations/20261202_021_password_resets'
import * as m022 from './migrations/20261202_022_station_owner'
import * as m023 from './migrations/20261202_023_certificate_retest_index'
import * as m024 from './migrations/20261202_024_alerts'
import * as m025 from './migrations/20261202_025_calibration_impacts'
import * as m026 from './migrations/20261202_026_spec_draft_workflow'
import * as m027 from './migrations/20261202_027_plant_time_zone'
import * as m028 from './migrations/20261202_028_engineering_lots'
import * as m029 from './migrations/20261202_029_import_uploads'
import * as m030 from './migrations/20261202_030_session_version'
import * as m031 from './migrations/20261202_031_unit_standing'
import * as m032 from './migrations/20261202_032_param_populations'
import * as m033 from './migrations/20261202_033_param_bins'
import * as m034 from './migrations/20261203_034_cache_versions'

type Migration = { up: (k: Knex) => Promise<void>; down: (k: Knex) => Promise<void> }

// Imported statically so the same list works bundled in the server, under jiti and in vitest.
const migrations: Record<string, Migration> = {
  '20261201_001_identity': m001,
  '20261201_002_catalogue': m002,
  '20261201_003_stations': m003,
  '20261201_004_results': m004,
  '20261201_005_aggregates': m005,
  '20261201_006_shipping': m006,
  '20261201_007_alerts_audit': m007,
  '20261201_008_imports': m008,
  '20261201_009_control_baselines': m009,
  '20261201_010_stats_pending': m010,
  '20261202_011_import_cancel': m011,
  '20261202_012_test_order': m012,
  '20261202_013_attempts_by_test_time': m013,
  '20261202_014_calibration_history': m014,
  '20261202_015_measurement_offset': m015,
  '20261202_016_shipments_certificates': m016,
  '20261202_018_shipment_part': m018,
  '20261202_020_mail_outbox': m020,
  '20261202_021_password_resets': m021,
  '20261202_022_station_owner': m022,
  '20261202_023_certificate_retest_index': m023,
  '20261202_024_alerts': m024,
  '20261202_025_calibration_impacts': m025,
  '20261202_026_spec_draft_workflow': m026,
  '20261202_027_plant_time_zone': m027,
  '20261202_028_engineering_lots': m028,
  '20261202_029_import_uploads': m029,
  '20261202_030_session_version': m030,
  '20261202_031_unit_standing': m031,
  '20261202_032_param_populations': m032,
  '20261202_033_param_bins': m033,
  '20261203_034_cache_versions': m034,
}

export const migrationSource: Knex.MigrationSource<string> = {
  getMigrations: async () => Object.keys(migrations).sort(),
  getMigrationName: (name) => name,
  getMigration: async (name) => migrations[name]!,
}
