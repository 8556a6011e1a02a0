/**
 * Lobeline's Sequelize models. Call `initModels(sequelize)` once (lib/db/client.ts does); the migrations in
 * migrations/ are the only way the schema changes, so nothing here is ever synced.
 */
import type { Sequelize } from 'sequelize';
import {
  FacilityRoleGrant,
  Invitation,
  initAccountModels,
  Membership,
  PasswordResetToken,
  Team,
  User,
} from './accounts';
import { AuditEvent, DeletionRequest, FixityCheck, initAuditModels, SavedComparison } from './audit';
import { Campaign, initCampaignModels, Shift, ShiftLogEntry } from './campaigns';
import { CampaignCitation, initCitationModels } from './citations';
import { initFileModels, RawFile, Scan, Upload } from './files';
import {
  AnalysisSettingsVersion,
  DetectorCalibrationVersion,
  initReductionModels,
  ReductionBatch,
  ReductionJob,
  ScanResult,
  ScanResultStep,
} from './reduction';

export * from './accounts';
export * from './audit';
export * from './campaigns';
export * from './citations';
export * from './files';
export * from './reduction';

let initialised: Sequelize | null = null;

export function initModels(sequelize: Sequelize): void {
  if (initialised === sequelize) return;
  initAccountModels(sequelize);
  initCampaignModels(sequelize);
  initFileModels(sequelize);
  initReductionModels(sequelize);
  initAuditModels(sequelize);
  initCitationModels(sequelize);

  User.hasMany(Membership, { foreignKey: 'user_id', as: 'memberships' });
  Membership.belongsTo(User, { foreignKey: 'user_id', as: 'user' });
  Team.hasMany(Membership, { foreignKey: 'team_id', as: 'memberships' });
  Membership.belongsTo(Team, { foreignKey: 'team_id', as: 'team' });
  User.hasMany(FacilityRoleGrant, { foreignKey: 'user_id', as: 'facilityRoles' });
  FacilityRoleGrant.belongsTo(User, { foreignKey: 'user_id', as: 'user' });
  Invitation.belongsTo(Team, { foreignKey: 'team_id', as: 'team' });
  PasswordResetToken.belongsTo(User, { foreignKey: 'user_id', as: 'user' });

  Team.hasMany(Campaign, { foreignKey: 'team_id', as: 'campaigns' });
  Campaign.belongsTo(Team, { foreignKey: 'team_id', as: 'team' });
  Campaign.hasMany(Shift, { foreignKey: 'campaign_id', as: 'shifts' });
  Shift.belongsTo(Campaign, { foreignKey: 'campaign_id', as: 'campaign' });
  Shift.hasMany(ShiftLogEntry, { foreignKey: 'shift_id', as: 'logEntries' });
  ShiftLogEntry.belongsTo(Shift, { foreignKey: 'shift_id', as: 'shift' });

  Scan.belongsTo(RawFile, { foreignKey: 'raw_file_id', as: 'rawFile' });
  RawFile.hasMany(Scan, { foreignKey: 'raw_file_id', as: 'scans' });
  Scan.belongsTo(Shift, { foreignKey: 'shift_id', as: 'shift' });
  Scan.belongsTo(Campaign, { foreignKey: 'campaign_id', as: 'campaign' });
  Shift.hasMany(Scan, { foreignKey: 'shift_id', as: 'scans' });
  Campaign.hasMany(Scan, { foreignKey: 'campaign_id', as: 'scans' });
  Upload.belongsTo(RawFile, { foreignKey: 'raw_file_id', as: 'rawFile' });

  Campaign.hasMany(DetectorCalibrationVersion, { foreignKey: 'campaign_id', as: 'calibrations' });
  Campaign.hasMany(AnalysisSettingsVersion, { foreignKey: 'campaign_id', as: 'settingsVersions' });
  ReductionJob.belongsTo(Scan, { foreignKey: 'scan_id', as: 'scan' });
  ReductionJob.belongsTo(ReductionBatch, { foreignKey: 'batch_id', as: 'batch' });
  ScanResult.belongsTo(Scan, { foreignKey: 'scan_id', as: 'scan' });
  ScanResult.hasMany(ScanResultStep, { foreignKey: 'result_id', as: 'steps' });
  ScanResultStep.belongsTo(ScanResult, { foreignKey: 'result_id', as: 'result' });
  ScanResult.belongsTo(DetectorCalibrationVersion, { foreignKey: 'calibration_id', as: 'calibration' });
  ScanResult.belongsTo(AnalysisSettingsVersion, { foreignKey: 'settings_id', as: 'settings' });

  AuditEvent.belongsTo(User, { foreignKey: 'actor_id', as: 'actor' });
  FixityCheck.belongsTo(RawFile, { foreignKey: 'raw_file_id', as: 'rawFile' });
  DeletionRequest.belongsTo(RawFile, { foreignKey: 'raw_file_id', as: 'rawFile' });
  SavedComparison.belongsTo(Team, { foreignKey: 'team_id', as: 'team' });
  Campaign.hasOne(CampaignCitation, { foreignKey: 'campaign_id', as: 'citation' });
  CampaignCitation.belongsTo(Campaign, { foreignKey: 'campaign_id', as: 'campaign' });

  initialised = sequelize;
}
