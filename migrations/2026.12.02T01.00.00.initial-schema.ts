/**
 * Initial schema: every table of the product brief (accounts and roles, campaigns and shifts, raw files and
 * uploads, scans, versioned calibrations and settings, reduction jobs and results, audit, stewardship).
 * Later capabilities add columns or tables in their own migrations; nothing else changes the schema.
 */
import { DataTypes, type QueryInterface } from 'sequelize';

type Ctx = { context: QueryInterface };

const id = () => ({ type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true, allowNull: false });
const ref = (table: string, opts: { nullable?: boolean; onDelete?: 'CASCADE' | 'RESTRICT' | 'SET NULL' } = {}) => ({
  type: DataTypes.INTEGER.UNSIGNED,
  allowNull: opts.nullable ?? false,
  references: { model: table, key: 'id' },
  onDelete: opts.onDelete ?? (opts.nullable ? 'SET NULL' : 'RESTRICT'),
  onUpdate: 'CASCADE',
});
const stamps = () => ({
  created_at: { type: DataTypes.DATE(3), allowNull: false },
  updated_at: { type: DataTypes.DATE(3), allowNull: false },
});

export async function up({ context: qi }: Ctx): Promise<void> {
  // ACCOUNTS //
  await qi.createTable('users', {
    id: id(),
    email: { type: DataTypes.STRING(254), allowNull: false, unique: true },
    name: { type: DataTypes.STRING(120), allowNull: false },
    password_hash: { type: DataTypes.STRING(100), allowNull: true },
    is_active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
    notification_prefs: { type: DataTypes.JSON, allowNull: true },
    last_sign_in_at: { type: DataTypes.DATE(3), allowNull: true },
    ...stamps(),
  });
  await qi.createTable('teams', {
    id: id(),
    slug: { type: DataTypes.STRING(64), allowNull: false, unique: true },
    name: { type: DataTypes.STRING(120), allowNull: false },
    description: { type: DataTypes.TEXT, allowNull: true },
    ...stamps(),
  });
  await qi.createTable('memberships', {
    id: id(),
    user_id: ref('users', { onDelete: 'CASCADE' }),
    team_id: ref('teams', { onDelete: 'CASCADE' }),
    role: { type: DataTypes.ENUM('operator', 'analyst', 'pi'), allowNull: false },
    ...stamps(),
  });
  await qi.addIndex('memberships', ['user_id', 'team_id'], { unique: true, name: 'memberships_user_team' });
  await qi.addIndex('memberships', ['team_id', 'role'], { name: 'memberships_team_role' });

  await qi.createTable('facility_roles', {
    id: id(),
    user_id: ref('users', { onDelete: 'CASCADE' }),
    role: { type: DataTypes.ENUM('steward', 'admin'), allowNull: false },
    ...stamps(),
  });
  await qi.addIndex('facility_roles', ['user_id', 'role'], { unique: true, name: 'facility_roles_user_role' });

  await qi.createTable('invitations', {
    id: id(),
    email: { type: DataTypes.STRING(254), allowNull: false },
    name: { type: DataTypes.STRING(120), allowNull: true },
    team_id: ref('teams', { nullable: true, onDelete: 'CASCADE' }),
    role: { type: DataTypes.ENUM('operator', 'analyst', 'pi'), allowNull: true },
    facility_role: { type: DataTypes.ENUM('steward', 'admin'), allowNull: true },
    token_hash: { type: DataTypes.CHAR(64), allowNull: false, unique: true },
    invited_by: ref('users', { nullable: true }),
    expires_at: { type: DataTypes.DATE(3), allowNull: false },
    accepted_at: { type: DataTypes.DATE(3), allowNull: true },
    revoked_at: { type: DataTypes.DATE(3), allowNull: true },
    ...stamps(),
  });
  await qi.addIndex('invitations', ['email'], { name: 'invitations_email' });

  await qi.createTable('password_reset_tokens', {
    id: id(),
    user_id: ref('users', { onDelete: 'CASCADE' }),
    token_hash: { type: DataTypes.CHAR(64), allowNull: false, unique: true },
    expires_at: { type: DataTypes.DATE(3), allowNull: false },
    used_at: { type: DataTypes.DATE(3), allowNull: true },
    ...stamps(),
  });

  await qi.createTable('sign_in_attempts', {
    id: { type: DataTypes.BIGINT.UNSIGNED, autoIncrement: true, primaryKey: true },
    email: { type: DataTypes.STRING(254), allowNull: false },
    ip: { type: DataTypes.STRING(64), allowNull: false },
    succeeded: { type: DataTypes.BOOLEAN, allowNull: false },
    created_at: { type: DataTypes.DATE(3), allowNull: false },
  });
  await qi.addIndex('sign_in_attempts', ['email', 'created_at'], { name: 'sign_in_attempts_email' });
  await qi.addIndex('sign_in_attempts', ['ip', 'created_at'], { name: 'sign_in_attempts_ip' });

  // CAMPAIGNS AND SHIFTS //
  await qi.createTable('campaigns', {
    id: id(),
    team_id: ref('teams'),
    name: { type: DataTypes.STRING(160), allowNull: false },
    target: { type: DataTypes.STRING(32), allowNull: false },
    wavelength_nm: { type: DataTypes.DOUBLE, allowNull: false },
    experiment_kind: {
      type: DataTypes.ENUM('angular_streaking', 'bicircular', 'two_color_phase', 'image'),
      allowNull: false,
    },
    description: { type: DataTypes.TEXT, allowNull: true },
    status: { type: DataTypes.ENUM('active', 'closed'), allowNull: false, defaultValue: 'active' },
    created_by: ref('users', { nullable: true }),
    // Set once the calibration tables exist (see below); the current approved pair.
    current_calibration_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    current_settings_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    embargo_until: { type: DataTypes.DATEONLY, allowNull: true },
    ...stamps(),
  });
  await qi.addIndex('campaigns', ['team_id', 'created_at'], { name: 'campaigns_team_created' });
  await qi.addIndex('campaigns', ['team_id', 'name'], { unique: true, name: 'campaigns_team_name' });

  await qi.createTable('shifts', {
    id: id(),
    team_id: ref('teams'),
    campaign_id: ref('campaigns'),
    title: { type: DataTypes.STRING(160), allowNull: false },
    status: { type: DataTypes.ENUM('open', 'closed'), allowNull: false, defaultValue: 'open' },
    opened_by: ref('users', { nullable: true }),
    opened_at: { type: DataTypes.DATE(3), allowNull: false },
    closed_by: ref('users', { nullable: true }),
    closed_at: { type: DataTypes.DATE(3), allowNull: true },
    receipt_sent_at: { type: DataTypes.DATE(3), allowNull: true },
    ...stamps(),
  });
  await qi.addIndex('shifts', ['campaign_id', 'opened_at'], { name: 'shifts_campaign_opened' });
  await qi.addIndex('shifts', ['team_id', 'status'], { name: 'shifts_team_status' });

  await qi.createTable('shift_log_entries', {
    id: id(),
    shift_id: ref('shifts', { onDelete: 'CASCADE' }),
    author_id: ref('users', { nullable: true }),
    noted_at: { type: DataTypes.DATE(3), allowNull: false },
    text: { type: DataTypes.TEXT, allowNull: false },
    target: { type: DataTypes.STRING(32), allowNull: true },
    wavelength_nm: { type: DataTypes.DOUBLE, allowNull: true },
    pulse_energy_uj: { type: DataTypes.DOUBLE, allowNull: true },
    ellipticity: { type: DataTypes.DOUBLE, allowNull: true },
    detector_voltages: { type: DataTypes.JSON, allowNull: true },
    ...stamps(),
  });
  await qi.addIndex('shift_log_entries', ['shift_id', 'noted_at'], { name: 'shift_log_shift_noted' });

  // RAW FILES AND UPLOADS //
  await qi.createTable('raw_files', {
    id: id(),
    team_id: ref('teams'),
    sha256: { type: DataTypes.CHAR(64), allowNull: false, unique: true },
    bucket: { type: DataTypes.STRING(63), allowNull: false },
    storage_key: { type: DataTypes.STRING(512), allowNull: false, unique: true },
    size_bytes: { type: DataTypes.BIGINT.UNSIGNED, allowNull: false },
    original_name: { type: DataTypes.STRING(255), allowNull: false },
    status: {
      type: DataTypes.ENUM('accepted', 'quarantined', 'released', 'replaced'),
      allowNull: false,
    },
    quarantine_reasons: { type: DataTypes.JSON, allowNull: true },
    metadata: { type: DataTypes.JSON, allowNull: true },
    metadata_completeness: { type: DataTypes.FLOAT, allowNull: true },
    uploaded_by: ref('users', { nullable: true }),
    verified_at: { type: DataTypes.DATE(3), allowNull: true },
    released_by: ref('users', { nullable: true }),
    released_at: { type: DataTypes.DATE(3), allowNull: true },
    replaced_by_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    // Stewardship (C10).
    storage_class: { type: DataTypes.STRING(32), allowNull: false, defaultValue: 'STANDARD' },
    archived_at: { type: DataTypes.DATE(3), allowNull: true },
    archive_key: { type: DataTypes.STRING(512), allowNull: true },
    embargo_until: { type: DataTypes.DATEONLY, allowNull: true },
    retention_until: { type: DataTypes.DATEONLY, allowNull: true },
    last_fixity_at: { type: DataTypes.DATE(3), allowNull: true },
    last_fixity_ok: { type: DataTypes.BOOLEAN, allowNull: true },
    deleted_at: { type: DataTypes.DATE(3), allowNull: true },
    ...stamps(),
  });
  await qi.addIndex('raw_files', ['team_id', 'created_at'], { name: 'raw_files_team_created' });
  await qi.addIndex('raw_files', ['status'], { name: 'raw_files_status' });

  await qi.createTable('uploads', {
    id: id(),
    team_id: ref('teams'),
    shift_id: ref('shifts'),
    user_id: ref('users'),
    bucket: { type: DataTypes.STRING(63), allowNull: false },
    object_key: { type: DataTypes.STRING(512), allowNull: false, unique: true },
    file_name: { type: DataTypes.STRING(255), allowNull: false },
    size_bytes: { type: DataTypes.BIGINT.UNSIGNED, allowNull: false },
    last_modified_ms: { type: DataTypes.BIGINT, allowNull: true },
    client_sha256: { type: DataTypes.CHAR(64), allowNull: true },
    precheck: { type: DataTypes.JSON, allowNull: true },
    multipart_upload_id: { type: DataTypes.STRING(1024), allowNull: true },
    part_size: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    part_count: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    status: {
      type: DataTypes.ENUM('open', 'verifying', 'completed', 'aborted', 'failed'),
      allowNull: false,
      defaultValue: 'open',
    },
    raw_file_id: ref('raw_files', { nullable: true }),
    error: { type: DataTypes.TEXT, allowNull: true },
    ...stamps(),
  });
  await qi.addIndex('uploads', ['shift_id', 'status'], { name: 'uploads_shift_status' });
  await qi.addIndex('uploads', ['user_id', 'file_name', 'size_bytes'], { name: 'uploads_resume_lookup' });

  // VERSIONED CALIBRATIONS AND SETTINGS //
  for (const table of ['detector_calibrations', 'analysis_settings']) {
    await qi.createTable(table, {
      id: id(),
      campaign_id: ref('campaigns', { onDelete: 'CASCADE' }),
      version: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      body: { type: DataTypes.JSON, allowNull: false },
      note: { type: DataTypes.TEXT, allowNull: true },
      status: { type: DataTypes.ENUM('draft', 'approved', 'retired'), allowNull: false, defaultValue: 'draft' },
      created_by: ref('users', { nullable: true }),
      approved_by: ref('users', { nullable: true }),
      approved_at: { type: DataTypes.DATE(3), allowNull: true },
      // Set when a result first uses this version; from then on the body never changes.
      locked_at: { type: DataTypes.DATE(3), allowNull: true },
      ...stamps(),
    });
    await qi.addIndex(table, ['campaign_id', 'version'], { unique: true, name: `${table}_campaign_version` });
  }
  await qi.addConstraint('campaigns', {
    fields: ['current_calibration_id'],
    type: 'foreign key',
    name: 'campaigns_current_calibration_fk',
    references: { table: 'detector_calibrations', field: 'id' },
    onDelete: 'SET NULL',
    onUpdate: 'CASCADE',
  });
  await qi.addConstraint('campaigns', {
    fields: ['current_settings_id'],
    type: 'foreign key',
    name: 'campaigns_current_settings_fk',
    references: { table: 'analysis_settings', field: 'id' },
    onDelete: 'SET NULL',
    onUpdate: 'CASCADE',
  });

  // SCANS //
  await qi.createTable('scans', {
    id: id(),
    team_id: ref('teams'),
    campaign_id: ref('campaigns'),
    shift_id: ref('shifts'),
    raw_file_id: ref('raw_files'),
    experiment_kind: {
      type: DataTypes.ENUM('angular_streaking', 'bicircular', 'two_color_phase', 'image'),
      allowNull: true,
    },
    title: { type: DataTypes.STRING(255), allowNull: true },
    target: { type: DataTypes.STRING(32), allowNull: true },
    wavelength_nm: { type: DataTypes.DOUBLE, allowNull: true },
    ellipticity: { type: DataTypes.DOUBLE, allowNull: true },
    helicity: { type: DataTypes.TINYINT, allowNull: true },
    step_quantity: { type: DataTypes.STRING(32), allowNull: true },
    n_steps: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    n_y: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    n_x: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    started_at: { type: DataTypes.DATE(3), allowNull: true },
    status: {
      type: DataTypes.ENUM('uploaded', 'queued', 'reducing', 'reduced', 'failed', 'quarantined'),
      allowNull: false,
    },
    status_message: { type: DataTypes.TEXT, allowNull: true },
    flagged: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
    flag_note: { type: DataTypes.TEXT, allowNull: true },
    latest_result_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    // Denormalised headline numbers of the latest result, for fast tables and trends.
    offset_deg: { type: DataTypes.DOUBLE, allowNull: true },
    offset_err_deg: { type: DataTypes.DOUBLE, allowNull: true },
    created_by: ref('users', { nullable: true }),
    ...stamps(),
  });
  await qi.addIndex('scans', ['team_id', 'created_at'], { name: 'scans_team_created' });
  await qi.addIndex('scans', ['campaign_id', 'status', 'created_at'], { name: 'scans_campaign_status' });
  await qi.addIndex('scans', ['shift_id', 'created_at'], { name: 'scans_shift_created' });
  await qi.addIndex('scans', ['raw_file_id'], { name: 'scans_raw_file' });
  await qi.addIndex('scans', ['team_id', 'target', 'wavelength_nm'], { name: 'scans_team_target_wavelength' });

  // REDUCTION //
  await qi.createTable('reduction_batches', {
    id: id(),
    campaign_id: ref('campaigns', { onDelete: 'CASCADE' }),
    calibration_id: ref('detector_calibrations'),
    settings_id: ref('analysis_settings'),
    requested_by: ref('users', { nullable: true }),
    total: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 0 },
    ...stamps(),
  });

  await qi.createTable('reduction_jobs', {
    id: id(),
    scan_id: ref('scans', { onDelete: 'CASCADE' }),
    calibration_id: ref('detector_calibrations'),
    settings_id: ref('analysis_settings'),
    batch_id: ref('reduction_batches', { nullable: true }),
    status: {
      type: DataTypes.ENUM('queued', 'running', 'succeeded', 'failed'),
      allowNull: false,
      defaultValue: 'queued',
    },
    attempts: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 0 },
    progress: { type: DataTypes.FLOAT, allowNull: false, defaultValue: 0 },
    error_message: { type: DataTypes.TEXT, allowNull: true },
    queue_job_id: { type: DataTypes.STRING(128), allowNull: true },
    requested_by: ref('users', { nullable: true }),
    started_at: { type: DataTypes.DATE(3), allowNull: true },
    finished_at: { type: DataTypes.DATE(3), allowNull: true },
    ...stamps(),
  });
  await qi.addIndex('reduction_jobs', ['scan_id', 'created_at'], { name: 'reduction_jobs_scan' });
  await qi.addIndex('reduction_jobs', ['batch_id', 'status'], { name: 'reduction_jobs_batch' });
  await qi.addIndex('reduction_jobs', ['status', 'created_at'], { name: 'reduction_jobs_status' });

  await qi.createTable('scan_results', {
    id: id(),
    scan_id: ref('scans', { onDelete: 'CASCADE' }),
    raw_file_id: ref('raw_files'),
    calibration_id: ref('detector_calibrations'),
    settings_id: ref('analysis_settings'),
    job_id: ref('reduction_jobs', { nullable: true }),
    result_json: { type: DataTypes.JSON, allowNull: false },
    derived_bucket: { type: DataTypes.STRING(63), allowNull: true },
    derived_key: { type: DataTypes.STRING(512), allowNull: true },
    software_version: { type: DataTypes.STRING(32), allowNull: false },
    offset_deg: { type: DataTypes.DOUBLE, allowNull: true },
    offset_err_deg: { type: DataTypes.DOUBLE, allowNull: true },
    warnings_count: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 0 },
    ...stamps(),
  });
  // Idempotency: the same scan with the same versions never gets a second result row.
  await qi.addIndex('scan_results', ['scan_id', 'calibration_id', 'settings_id'], {
    unique: true,
    name: 'scan_results_scan_versions',
  });
  await qi.addIndex('scan_results', ['calibration_id'], { name: 'scan_results_calibration' });
  await qi.addConstraint('scans', {
    fields: ['latest_result_id'],
    type: 'foreign key',
    name: 'scans_latest_result_fk',
    references: { table: 'scan_results', field: 'id' },
    onDelete: 'SET NULL',
    onUpdate: 'CASCADE',
  });

  await qi.createTable('scan_result_steps', {
    id: id(),
    result_id: ref('scan_results', { onDelete: 'CASCADE' }),
    step_index: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    value: { type: DataTypes.DOUBLE, allowNull: true },
    total_counts: { type: DataTypes.DOUBLE, allowNull: true },
    offset_deg: { type: DataTypes.DOUBLE, allowNull: true },
    offset_err_deg: { type: DataTypes.DOUBLE, allowNull: true },
    transverse_shift_au: { type: DataTypes.DOUBLE, allowNull: true },
    radius_au: { type: DataTypes.DOUBLE, allowNull: true },
    radius_err_au: { type: DataTypes.DOUBLE, allowNull: true },
    intensity_wcm2: { type: DataTypes.DOUBLE, allowNull: true },
    intensity_err_wcm2: { type: DataTypes.DOUBLE, allowNull: true },
    lobes: { type: DataTypes.JSON, allowNull: true },
    ...stamps(),
  });
  await qi.addIndex('scan_result_steps', ['result_id', 'step_index'], {
    unique: true,
    name: 'scan_result_steps_result_step',
  });

  // AUDIT (C13) //
  await qi.createTable('audit_events', {
    id: { type: DataTypes.BIGINT.UNSIGNED, autoIncrement: true, primaryKey: true },
    at: { type: DataTypes.DATE(3), allowNull: false },
    actor_id: ref('users', { nullable: true }),
    actor_email: { type: DataTypes.STRING(254), allowNull: true },
    action: { type: DataTypes.STRING(64), allowNull: false },
    team_id: ref('teams', { nullable: true }),
    target_type: { type: DataTypes.STRING(32), allowNull: true },
    target_id: { type: DataTypes.STRING(64), allowNull: true },
    ip: { type: DataTypes.STRING(64), allowNull: true },
    outcome: { type: DataTypes.ENUM('ok', 'refused', 'failed'), allowNull: false, defaultValue: 'ok' },
    details: { type: DataTypes.JSON, allowNull: true },
  });
  await qi.addIndex('audit_events', ['at'], { name: 'audit_events_at' });
  await qi.addIndex('audit_events', ['team_id', 'at'], { name: 'audit_events_team_at' });
  await qi.addIndex('audit_events', ['actor_id', 'at'], { name: 'audit_events_actor_at' });
  await qi.addIndex('audit_events', ['action', 'at'], { name: 'audit_events_action_at' });

  // STEWARDSHIP, COMPARISONS, MODELS (C8–C10) //
  await qi.createTable('fixity_checks', {
    id: id(),
    raw_file_id: ref('raw_files', { onDelete: 'CASCADE' }),
    checked_at: { type: DataTypes.DATE(3), allowNull: false },
    ok: { type: DataTypes.BOOLEAN, allowNull: false },
    sha256_found: { type: DataTypes.CHAR(64), allowNull: true },
    triggered_by: ref('users', { nullable: true }),
    message: { type: DataTypes.TEXT, allowNull: true },
  });
  await qi.addIndex('fixity_checks', ['raw_file_id', 'checked_at'], { name: 'fixity_checks_file' });

  await qi.createTable('deletion_requests', {
    id: id(),
    raw_file_id: ref('raw_files', { onDelete: 'CASCADE' }),
    requested_by: ref('users', { nullable: true }),
    confirmed_by: ref('users', { nullable: true }),
    reason: { type: DataTypes.TEXT, allowNull: false },
    confirmed_at: { type: DataTypes.DATE(3), allowNull: true },
    cancelled_at: { type: DataTypes.DATE(3), allowNull: true },
    ...stamps(),
  });

  await qi.createTable('saved_comparisons', {
    id: id(),
    team_id: ref('teams', { onDelete: 'CASCADE' }),
    slug: { type: DataTypes.STRING(32), allowNull: false, unique: true },
    title: { type: DataTypes.STRING(160), allowNull: false },
    spec: { type: DataTypes.JSON, allowNull: false },
    created_by: ref('users', { nullable: true }),
    ...stamps(),
  });

  await qi.createTable('model_cache', {
    id: id(),
    param_hash: { type: DataTypes.CHAR(64), allowNull: false, unique: true },
    model: { type: DataTypes.STRING(32), allowNull: false },
    params: { type: DataTypes.JSON, allowNull: false },
    result: { type: DataTypes.JSON, allowNull: false },
    ...stamps(),
  });
}

export async function down({ context: qi }: Ctx): Promise<void> {
  await qi.removeConstraint('scans', 'scans_latest_result_fk');
  await qi.removeConstraint('campaigns', 'campaigns_current_calibration_fk');
  await qi.removeConstraint('campaigns', 'campaigns_current_settings_fk');
  for (const table of [
    'model_cache',
    'saved_comparisons',
    'deletion_requests',
    'fixity_checks',
    'audit_events',
    'scan_result_steps',
    'scan_results',
    'reduction_jobs',
    'reduction_batches',
    'scans',
    'analysis_settings',
    'detector_calibrations',
    'uploads',
    'raw_files',
    'shift_log_entries',
    'shifts',
    'campaigns',
    'sign_in_attempts',
    'password_reset_tokens',
    'invitations',
    'facility_roles',
    'memberships',
    'teams',
    'users',
  ]) {
    await qi.dropTable(table);
  }
}
