// The lost-job sweep. MariaDB is the truth about reduction requests; Redis only carries the work. A request that
// MariaDB shows as queued or running but that the queue no longer holds was lost: Redis restarted (it keeps nothing
// on disk here), or the job's last attempt failed while MariaDB was away so its failure could not be recorded.
// Each worker runs the sweep on a timer; a lease row in MariaDB (worker_leases) lets only one worker at a time
// sweep, and the deterministic job id makes a second add of the same job a no-op in any case.
import { Op, QueryTypes } from 'sequelize';
import { getDb } from '@/lib/db';
import { log } from '@/lib/log';
import { addReductionJob, getReductionQueue, REDUCTION_ATTEMPTS, reductionJobId } from '@/lib/queue/reduction-queue';
import { ReductionJob, Scan } from '@/models';
import { markReductionFailed } from './reduce-scan';

const slog = log.child({ surface: 'reduction', part: 'sweep' });

export const SWEEP_LEASE = 'reduction-sweep';
/** Default time between sweeps of one worker (ms). */
export const SWEEP_INTERVAL_MS = 30_000;
/** A request younger than this is left alone (its web request may still be adding it to the queue). */
export const SWEEP_MIN_AGE_MS = 20_000;
/**
 * Runs a request may start in total, over all re-queues, before the sweep gives up on it: a job that keeps getting
 * lost (or that kills its worker) must end as failed, not circle for ever.
 */
export const SWEEP_MAX_RUNS = REDUCTION_ATTEMPTS * 2;
const BATCH = 200;

/** Job states in which the queue still holds (and will run, or is running) the job. */
const LIVE_STATES = new Set(['waiting', 'active', 'delayed', 'prioritized', 'waiting-children']);

export interface SweepOptions {
  /** Who sweeps (shown in worker_leases.holder). */
  holder: string;
  /** How long the lease lasts (ms); the holder renews it on every sweep. */
  leaseMs?: number;
  minAgeMs?: number;
}

export interface SweepReport {
  /** false when another worker holds the lease (nothing was looked at). */
  leased: boolean;
  /** Open requests looked at. */
  checked: number;
  /** Requests put back on the queue. */
  requeued: number[];
  /** Requests closed as failed because they had used up SWEEP_MAX_RUNS. */
  givenUp: number[];
}

/**
 * Takes or renews the named lease for `holder`; true when `holder` now holds it. One UPDATE decides, so two
 * workers asking at the same moment cannot both win.
 */
export async function acquireLease(name: string, holder: string, leaseMs: number): Promise<boolean> {
  const db = getDb();
  await db.query(
    "INSERT IGNORE INTO worker_leases (name, holder, expires_at) VALUES (?, NULL, '1970-01-01 00:00:01')",
    {
      replacements: [name],
    },
  );
  const [, meta] = (await db.query(
    `UPDATE worker_leases SET holder = :holder, expires_at = NOW(3) + INTERVAL :us MICROSECOND
      WHERE name = :name AND (holder = :holder OR holder IS NULL OR expires_at < NOW(3))`,
    { replacements: { name, holder, us: Math.round(leaseMs * 1000) }, type: QueryTypes.UPDATE },
  )) as unknown as [unknown, number];
  return Number(meta) === 1;
}

/** Gives the lease up (a stopping worker), so that another worker can sweep at once. */
export async function releaseLease(name: string, holder: string): Promise<void> {
  await getDb().query('UPDATE worker_leases SET holder = NULL WHERE name = ? AND holder = ?', {
    replacements: [name, holder],
  });
}

/** One sweep: finds open requests that the queue lost and queues them again (or closes them when used up). */
export async function sweepLostReductions(options: SweepOptions): Promise<SweepReport> {
  const report: SweepReport = { leased: false, checked: 0, requeued: [], givenUp: [] };
  const leaseMs = options.leaseMs ?? SWEEP_INTERVAL_MS * 3;
  if (!(await acquireLease(SWEEP_LEASE, options.holder, leaseMs))) return report;
  report.leased = true;
  const minAgeMs = options.minAgeMs ?? SWEEP_MIN_AGE_MS;
  const open = await ReductionJob.findAll({
    where: {
      status: { [Op.in]: ['queued', 'running'] },
      updated_at: { [Op.lte]: new Date(Date.now() - minAgeMs) },
    },
    order: [['id', 'ASC']],
    limit: BATCH,
  });
  const queue = getReductionQueue();
  for (const row of open) {
    report.checked++;
    const jobId = row.queue_job_id ?? reductionJobId(row.scan_id, row.calibration_id, row.settings_id);
    const held = await queue.getJob(jobId);
    if (held) {
      const state = await held.getState();
      if (LIVE_STATES.has(state)) continue;
      // A finished entry kept under the id would swallow the new add: remove it first.
      await held.remove().catch((err) => slog.warn('could not remove a finished queue entry', { jobId, err }));
    }
    // Read again: the job may have finished between the query above and now.
    const fresh = await ReductionJob.findByPk(row.id);
    if (!fresh || (fresh.status !== 'queued' && fresh.status !== 'running')) continue;
    if (fresh.attempts >= SWEEP_MAX_RUNS) {
      await markReductionFailed({
        reductionJobId: fresh.id,
        scanId: fresh.scan_id,
        message:
          `The reduction was started ${fresh.attempts} times and lost each time before it finished ` +
          '(a service went away or the worker stopped). It will not be tried again by itself; reduce the scan ' +
          'again once the services are steady.',
        attempts: fresh.attempts,
      });
      report.givenUp.push(fresh.id);
      continue;
    }
    // A split event file whose merge job was lost is planned again under the request's own id (its stored chunk
    // parts are overwritten by the new chunk jobs, lib/queue/event-flow.ts).
    const addId = fresh.chunks_total != null ? reductionJobId(row.scan_id, row.calibration_id, row.settings_id) : jobId;
    await addReductionJob(
      {
        scanId: fresh.scan_id,
        calibrationId: fresh.calibration_id,
        settingsId: fresh.settings_id,
        reductionJobId: fresh.id,
      },
      addId,
    );
    await fresh.update({ status: 'queued', queue_job_id: addId });
    await Scan.update(
      { status: 'queued', status_message: 'Queued again after the job queue lost the request.' },
      { where: { id: fresh.scan_id, status: { [Op.in]: ['queued', 'reducing'] } } },
    );
    report.requeued.push(fresh.id);
  }
  if (report.requeued.length || report.givenUp.length) {
    slog.info('lost reductions swept', { requeued: report.requeued, givenUp: report.givenUp });
  }
  return report;
}

/**
 * Runs `sweepLostReductions` now and then every `intervalMs` until `stop()` (which waits for a running sweep and
 * gives the lease up). Errors (a service away) are logged and the next tick tries again.
 */
export function startSweepTimer(options: SweepOptions & { intervalMs?: number }): { stop: () => Promise<void> } {
  const intervalMs = options.intervalMs ?? SWEEP_INTERVAL_MS;
  const leaseMs = options.leaseMs ?? intervalMs * 3;
  let running: Promise<unknown> | null = null;
  let stopped = false;
  const tick = () => {
    if (running || stopped) return;
    running = sweepLostReductions({ ...options, leaseMs })
      .catch((err) => slog.warn('sweep of lost reductions failed; trying again at the next tick', { err }))
      .finally(() => {
        running = null;
      });
  };
  tick();
  const timer = setInterval(tick, intervalMs);
  timer.unref();
  return {
    stop: async () => {
      stopped = true;
      clearInterval(timer);
      if (running) await running;
      await releaseLease(SWEEP_LEASE, options.holder).catch(() => undefined);
    },
  };
}
