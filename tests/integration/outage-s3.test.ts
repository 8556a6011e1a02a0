// The S3 service taken away in the middle of a reduction on a private test instance (helpers/outage.ts): stopped
// after the raw file is downloaded (progress 5 %), so the upload of the result file fails. The attempt's message
// names the next attempt and its wait (a retry that does come); once S3 is back, the back-off's next attempt
// reduces the scan exactly once: one result row, one derived object. Waits are bounded polling of observable
// state. (The S3 service and the SMTP catcher share one process here, so mail is away too; no mail is expected.)
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startReductionWorker } from '@/lib/jobs/worker';
import { enqueueReductionForScan } from '@/lib/queue/enqueue';
import { getReductionQueue } from '@/lib/queue/reduction-queue';
import { headObject } from '@/lib/storage/s3';
import { ReductionJob, Scan, ScanResult } from '@/models';
import { finished, type OutageInstance, openOutageInstance, waitFor } from './helpers/outage';

let inst: OutageInstance;

beforeAll(async () => {
  inst = await openOutageInstance('test-outage-s3', 3360);
});
afterAll(async () => {
  await inst?.close();
});

describe('S3 stopped in the middle of a reduction', () => {
  it('the upload fails, the message names the next attempt, and the scan is reduced exactly once after', async () => {
    const { scanId } = await inst.addScan({ seed: 41 });
    let stopped = false;
    const worker = startReductionWorker({
      name: 'outage-s3-1',
      sweep: { intervalMs: 500, minAgeMs: 0 },
      onProgress: async (_data, fraction) => {
        if (stopped || fraction < 0.05 || fraction >= 0.9) return;
        stopped = true;
        await inst.stop('s3');
      },
    });
    try {
      const o = await enqueueReductionForScan(scanId);
      if (!o.queued) throw new Error(o.reason);
      await waitFor('first attempt failed and delayed', async () => {
        const job = await getReductionQueue().getJob(o.queueJobId);
        return job && (await job.getState()) === 'delayed' ? job : undefined;
      });
      expect(await inst.answers('s3')).toBe(false);
      const waiting = await ReductionJob.findByPk(o.reductionJobId);
      expect(waiting?.status).toBe('queued');
      expect(waiting?.error_message).toMatch(/^Attempt 1 of 6 failed; the next one starts in about 5 s\./);
      const scanWaiting = await Scan.findByPk(scanId);
      expect(scanWaiting?.status).toBe('queued');
      expect(await ScanResult.count({ where: { scan_id: scanId } })).toBe(0);

      await inst.start('s3');
      const row = await finished(o.reductionJobId);
      expect(row.status, row.error_message ?? '').toBe('succeeded');
      expect(row.attempts).toBe(2);
    } finally {
      await worker.close();
    }
    const results = await ScanResult.findAll({ where: { scan_id: scanId } });
    expect(results).toHaveLength(1);
    const r = results[0];
    if (!r?.derived_bucket || !r.derived_key) throw new Error('the result names no derived object');
    const head = await headObject(r.derived_bucket, r.derived_key);
    expect(head.size).toBeGreaterThan(0);
    expect((await Scan.findByPk(scanId))?.status).toBe('reduced');
  });
});
