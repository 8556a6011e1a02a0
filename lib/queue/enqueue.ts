// Asking for a reduction: one reduction_jobs row per request (reused while an identical request is still open) and
// one BullMQ job with the deterministic id `scan-<id>-cal-<c>-set-<s>`, so that duplicate requests collapse.
// Called by the ingest after a file is catalogued, by the scan page ("reduce again") and by campaign batches.
import { Op } from 'sequelize';
import { getDb } from '@/lib/db';
import { retryOnLockConflict } from '@/lib/db/retry';
import { AppError } from '@/lib/errors';
import { log } from '@/lib/log';
import { ARCHIVED_REDUCTION_MESSAGE } from '@/lib/stewardship/archive-words';
import { AnalysisSettingsVersion, Campaign, DetectorCalibrationVersion, RawFile, ReductionJob, Scan } from '@/models';
import { addReductionJob, reductionJobId } from './reduction-queue';

export interface EnqueueOptions {
  /** Calibration version (default: the campaign's current approved one). */
  calibrationId?: number;
  /** Analysis-settings version (default: the campaign's current approved one). */
  settingsId?: number;
  batchId?: number | null;
  requestedBy?: number | null;
}

export type EnqueueOutcome =
  | { queued: true; reductionJobId: number; queueJobId: string; calibrationId: number; settingsId: number }
  | { queued: false; reason: string; needsRestore?: { rawFileId: number } };

/**
 * Queues the reduction of one scan with a calibration and settings version of its campaign.
 *
 * Returns `{ queued: false, reason }` (and leaves the scan `uploaded` with the reason as its status message) when
 * the campaign has no approved calibration or settings yet; throws AppError for a missing scan, a quarantined
 * file, versions of another campaign, or an unreachable queue.
 */
export async function enqueueReductionForScan(scanId: number, options: EnqueueOptions = {}): Promise<EnqueueOutcome> {
  const db = getDb();
  const scan = await Scan.findByPk(scanId);
  if (!scan) throw new AppError('not_found:scan');
  if (scan.status === 'quarantined') {
    throw new AppError('conflict:reduction', {
      message: 'This scan’s file is quarantined; release it (or replace the file) before reducing it.',
    });
  }
  // An archived file (or one on its way to or from the archive) is not reduced: the answer asks for a restore.
  const file = await RawFile.findByPk(scan.raw_file_id, { attributes: ['id', 'archive_state'] });
  if (file && file.archive_state !== 'online') {
    return { queued: false, reason: ARCHIVED_REDUCTION_MESSAGE, needsRestore: { rawFileId: file.id } };
  }
  const campaign = await Campaign.findByPk(scan.campaign_id);
  if (!campaign) throw new AppError('not_found:campaign');
  const calibrationId = options.calibrationId ?? campaign.current_calibration_id;
  const settingsId = options.settingsId ?? campaign.current_settings_id;
  if (calibrationId == null || settingsId == null) {
    const reason =
      'Not reduced yet: the campaign has no approved detector calibration and analysis settings. ' +
      'An analyst creates them on the calibration page and the PI approves them.';
    if (scan.status === 'uploaded') await scan.update({ status_message: reason });
    return { queued: false, reason };
  }
  const [calibration, settings] = await Promise.all([
    DetectorCalibrationVersion.findByPk(calibrationId, { attributes: ['id', 'campaign_id'] }),
    AnalysisSettingsVersion.findByPk(settingsId, { attributes: ['id', 'campaign_id'] }),
  ]);
  if (!calibration || calibration.campaign_id !== scan.campaign_id) {
    throw new AppError('not_found:calibration', {
      message: 'That calibration version does not belong to this campaign.',
    });
  }
  if (!settings || settings.campaign_id !== scan.campaign_id) {
    throw new AppError('not_found:settings', { message: 'Those analysis settings do not belong to this campaign.' });
  }

  const queueJobId = reductionJobId(scan.id, calibrationId, settingsId);
  // Requests for one scan queue up behind each other on the scan row's lock, so the lookup of an open request
  // needs no lock of its own. (With `FOR UPDATE` it took gap locks on reduction_jobs, and two uploads accepted at
  // the same moment — different scans — then deadlocked on their inserts: errno 1213, one scan left without a
  // job.) A deadlock InnoDB still reports is re-run as a whole (lib/db/retry.ts).
  const row = await retryOnLockConflict(() =>
    db.transaction(async (transaction) => {
      await Scan.findByPk(scan.id, { attributes: ['id'], transaction, lock: transaction.LOCK.UPDATE });
      const candidate = await ReductionJob.findOne({
        where: {
          scan_id: scan.id,
          calibration_id: calibrationId,
          settings_id: settingsId,
          status: { [Op.in]: ['queued', 'running'] },
        },
        attributes: ['id'],
        order: [['id', 'DESC']],
        transaction,
      });
      // The candidate's own row is locked by primary key (a record lock, no gap): a worker finishing it right now
      // is waited for, and a request that has just ended is not reused.
      const locked = candidate
        ? await ReductionJob.findByPk(candidate.id, { transaction, lock: transaction.LOCK.UPDATE })
        : null;
      const open = locked && (locked.status === 'queued' || locked.status === 'running') ? locked : null;
      const job =
        open ??
        (await ReductionJob.create(
          {
            scan_id: scan.id,
            calibration_id: calibrationId,
            settings_id: settingsId,
            batch_id: options.batchId ?? null,
            requested_by: options.requestedBy ?? null,
            queue_job_id: queueJobId,
            error_message: null,
            started_at: null,
            finished_at: null,
          },
          { transaction },
        ));
      if (open && options.batchId != null && open.batch_id == null)
        await open.update({ batch_id: options.batchId }, { transaction });
      if (scan.status !== 'reducing') {
        await Scan.update({ status: 'queued', status_message: null }, { where: { id: scan.id }, transaction });
      }
      return job;
    }),
  );

  try {
    await addReductionJob({ scanId: scan.id, calibrationId, settingsId, reductionJobId: row.id }, queueJobId);
  } catch (err) {
    log.error('could not add the reduction job to the queue', { scanId, queueJobId, err });
    await ReductionJob.update(
      { status: 'failed', error_message: 'The job queue was not reachable; the reduction was not started.' },
      { where: { id: row.id, status: 'queued' } },
    );
    await Scan.update(
      { status: 'uploaded', status_message: 'The job queue was not reachable; ask for the reduction again.' },
      { where: { id: scan.id, status: 'queued' } },
    );
    throw new AppError('unavailable:queue', { cause: err });
  }
  return { queued: true, reductionJobId: row.id, queueJobId, calibrationId, settingsId };
}
