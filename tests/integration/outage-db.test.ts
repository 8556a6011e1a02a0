// MariaDB taken away in the middle of a reduction on a private test instance (helpers/outage.ts). The job's
// attempt fails while the database is away; the queue's back-off brings it back after the outage, or (when the
// failed attempt was its last and the failure could not even be recorded) the worker's lost-job sweep re-queues it.
// Either way the reduction completes exactly once: one result row with all its steps. The service is stopped at a
// known point of the job (after the raw file is downloaded, progress 5 %) and restarted once the queue shows the
// attempt as over; every wait is bounded polling of observable state.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startReductionWorker } from '@/lib/jobs/worker';
import { enqueueReductionForScan } from '@/lib/queue/enqueue';
import { getReductionQueue, reductionJobId } from '@/lib/queue/reduction-queue';
import { ReductionJob, Scan, ScanResult, ScanResultStep } from '@/models';
import { finished, type OutageInstance, openOutageInstance, waitFor } from './helpers/outage';

let inst: OutageInstance;

beforeAll(async () => {
  inst = await openOutageInstance('test-outage-db', 3350);
});
afterAll(async () => {
  await inst?.close();
});

function stopDbOnceAt5Percent(state: { stopped: boolean }) {
  return async (_data: unknown, fraction: number) => {
    if (state.stopped || fraction < 0.05 || fraction >= 0.9) return;
    state.stopped = true;
    await inst.stop('mariadb');
  };
}

describe('MariaDB stopped in the middle of a reduction', () => {
  it('the attempt fails, the back-off outlasts the outage and the scan is reduced exactly once', async () => {
    const { scanId, steps } = await inst.addScan({ seed: 31 });
    const state = { stopped: false };
    const worker = startReductionWorker({
      name: 'outage-db-1',
      sweep: { intervalMs: 500, minAgeMs: 0 },
      onProgress: stopDbOnceAt5Percent(state),
    });
    try {
      const o = await enqueueReductionForScan(scanId);
      if (!o.queued) throw new Error(o.reason);
      // The attempt is over when the queue holds the job as delayed (waiting for its back-off).
      await waitFor('first attempt failed and delayed', async () => {
        const job = await getReductionQueue().getJob(o.queueJobId);
        return job && (await job.getState()) === 'delayed' ? job : undefined;
      });
      expect(state.stopped).toBe(true);
      expect(await inst.answers('mariadb')).toBe(false);
      await inst.start('mariadb');

      const row = await finished(o.reductionJobId);
      expect(row.status, row.error_message ?? '').toBe('succeeded');
      expect(row.attempts).toBe(2);
    } finally {
      await worker.close();
    }
    const results = await ScanResult.findAll({ where: { scan_id: scanId } });
    expect(results).toHaveLength(1);
    expect(await ScanResultStep.count({ where: { result_id: results[0]?.id ?? 0 } })).toBe(steps);
    const scan = await Scan.findByPk(scanId);
    expect(scan?.status).toBe('reduced');
    expect(scan?.latest_result_id).toBe(results[0]?.id);
  });

  it('a last attempt that failed while MariaDB was away is found by the sweep and reduced exactly once', async () => {
    const { scanId, steps } = await inst.addScan({ seed: 32 });
    // The scan and its request as the web side leaves them, then one job allowed a single attempt (BullMQ's own
    // per-job option), so that the attempt that fails during the outage is the last one.
    const o = await enqueueReductionForScan(scanId);
    if (!o.queued) throw new Error(o.reason);
    const queue = getReductionQueue();
    await (await queue.getJob(o.queueJobId))?.remove();
    const jobId = reductionJobId(scanId, o.calibrationId, o.settingsId);
    await queue.add(
      'reduce-scan',
      { scanId, calibrationId: o.calibrationId, settingsId: o.settingsId, reductionJobId: o.reductionJobId },
      { jobId, attempts: 1 },
    );
    const state = { stopped: false };
    const worker = startReductionWorker({
      name: 'outage-db-2',
      sweep: { intervalMs: 500, minAgeMs: 0 },
      onProgress: stopDbOnceAt5Percent(state),
    });
    try {
      // Failed for good and removed from the queue, but MariaDB could not be told: the row still says running.
      await waitFor('the job left the queue', async () =>
        state.stopped && (await queue.getJob(jobId)) === undefined ? true : undefined,
      );
      await inst.start('mariadb');
      const row = await finished(o.reductionJobId);
      expect(row.status, row.error_message ?? '').toBe('succeeded');
      expect(row.attempts).toBe(2);
    } finally {
      await worker.close();
    }
    const results = await ScanResult.findAll({ where: { scan_id: scanId } });
    expect(results).toHaveLength(1);
    expect(await ScanResultStep.count({ where: { result_id: results[0]?.id ?? 0 } })).toBe(steps);
    expect((await Scan.findByPk(scanId))?.status).toBe('reduced');
    expect(await ReductionJob.count({ where: { scan_id: scanId } })).toBe(1);
  });
});
