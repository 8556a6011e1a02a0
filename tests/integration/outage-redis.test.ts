// Redis taken away on a private test instance (helpers/outage.ts): requests that queue work fail fast with a clear
// sentence and lose nothing; jobs lost by a Redis restart (Redis keeps nothing on disk here) are found by the
// worker's lost-job sweep and reduced exactly once. The truth is the instance's own state: MariaDB rows and what
// the queue holds, read back after each step (no timing, bounded polling only).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { isAppError } from '@/lib/errors';
import { startReductionWorker } from '@/lib/jobs/worker';
import { enqueueReductionForScan } from '@/lib/queue/enqueue';
import { closeReductionQueue, getReductionQueue } from '@/lib/queue/reduction-queue';
import { ReductionJob, Scan, ScanResult } from '@/models';
import { finished, type OutageInstance, openOutageInstance, waitFor } from './helpers/outage';

let inst: OutageInstance;

beforeAll(async () => {
  inst = await openOutageInstance('test-outage-redis', 3340);
});
afterAll(async () => {
  await inst?.close();
});

/** Resolves to the error `p` rejects with, or fails the test if it neither settles nor rejects in `boundMs`. */
async function rejection(p: Promise<unknown>, boundMs: number): Promise<unknown> {
  let timer: NodeJS.Timeout | undefined;
  const hung = new Promise<'hung'>((r) => {
    timer = setTimeout(() => r('hung'), boundMs);
  });
  try {
    const out = await Promise.race([
      p.then(
        () => 'resolved' as const,
        (err: unknown) => ({ err }),
      ),
      hung,
    ]);
    if (out === 'hung') throw new Error(`still waiting after ${boundMs} ms: the request hangs`);
    if (out === 'resolved') throw new Error('the request succeeded although Redis was stopped');
    return out.err;
  } finally {
    clearTimeout(timer);
  }
}

describe('Redis stopped', () => {
  it('makes a request for a reduction fail with unavailable:queue instead of hanging, leaving a clear state', async () => {
    const { scanId } = await inst.addScan({ seed: 21 });
    await getReductionQueue().waitUntilReady();
    await inst.stop('redis');
    expect(await inst.answers('redis')).toBe(false);
    try {
      // An already connected producer, then one created while Redis is away (its first connection never comes).
      // The 30 s bound only tells a hang from an answer; the fail-fast settings answer within about 4 s.
      const first = await rejection(enqueueReductionForScan(scanId), 30_000);
      expect(isAppError(first) && first.code).toBe('unavailable:queue');
      expect(isAppError(first) && first.userMessage).toMatch(/job queue is not answering/);
      await closeReductionQueue();
      const second = await rejection(enqueueReductionForScan(scanId), 30_000);
      expect(isAppError(second) && second.code).toBe('unavailable:queue');

      const scan = await Scan.findByPk(scanId);
      expect(scan?.status).toBe('uploaded');
      expect(scan?.status_message).toMatch(/queue was not reachable; ask for the reduction again/);
      const rows = await ReductionJob.findAll({ where: { scan_id: scanId } });
      expect(rows.length).toBeGreaterThan(0);
      expect(rows.every((r) => r.status === 'failed')).toBe(true);
    } finally {
      await closeReductionQueue();
      await inst.start('redis');
    }
    // Nothing was lost: asking again once Redis is back queues the reduction.
    const again = await enqueueReductionForScan(scanId);
    expect(again.queued).toBe(true);
    if (again.queued) expect(await getReductionQueue().getJob(again.queueJobId)).toBeTruthy();
    await (await getReductionQueue().getJob(again.queued ? again.queueJobId : ''))?.remove();
    await ReductionJob.update({ status: 'failed' }, { where: { scan_id: scanId, status: 'queued' } });
  });

  it('loses a queued job when it restarts; the sweep re-queues it and the scan is reduced exactly once', async () => {
    const { scanId, steps } = await inst.addScan({ seed: 22 });
    const o = await enqueueReductionForScan(scanId);
    if (!o.queued) throw new Error(o.reason);
    expect(await getReductionQueue().getJob(o.queueJobId)).toBeTruthy();

    await inst.stop('redis');
    await inst.start('redis');
    await waitFor('queue answers again', async () => ((await getReductionQueue().count()) >= 0 ? true : undefined));
    // The restart emptied Redis: MariaDB still says queued, the queue no longer holds the job.
    expect(await getReductionQueue().getJob(o.queueJobId)).toBeUndefined();
    expect((await ReductionJob.findByPk(o.reductionJobId))?.status).toBe('queued');

    const worker = startReductionWorker({ name: 'outage-redis-1', sweep: { intervalMs: 500, minAgeMs: 0 } });
    try {
      const row = await finished(o.reductionJobId);
      expect(row.status, row.error_message ?? '').toBe('succeeded');
      expect(row.attempts).toBe(1);
    } finally {
      await worker.close();
    }
    expect(await ScanResult.count({ where: { scan_id: scanId } })).toBe(1);
    const scan = await Scan.findByPk(scanId);
    expect(scan?.status).toBe('reduced');
    expect(scan?.n_steps).toBe(steps);
  });

  it('restarting in the middle of a running job leaves exactly one result', async () => {
    const { scanId } = await inst.addScan({ seed: 23 });
    let restarted = false;
    const worker = startReductionWorker({
      name: 'outage-redis-2',
      sweep: { intervalMs: 500, minAgeMs: 0 },
      // After the raw file is downloaded (progress 5 %), Redis goes away and comes back empty.
      onProgress: async (_data, fraction) => {
        if (restarted || fraction < 0.05 || fraction >= 0.9) return;
        restarted = true;
        await inst.stop('redis');
        await inst.start('redis');
      },
    });
    try {
      const o = await enqueueReductionForScan(scanId);
      if (!o.queued) throw new Error(o.reason);
      const row = await finished(o.reductionJobId);
      expect(restarted).toBe(true);
      expect(row.status, row.error_message ?? '').toBe('succeeded');
    } finally {
      await worker.close();
    }
    expect(await ScanResult.count({ where: { scan_id: scanId } })).toBe(1);
    expect((await Scan.findByPk(scanId))?.status).toBe('reduced');
  });
});

describe('the sweep lease (worker_leases)', () => {
  it('is held by one worker at a time, renewed by its holder and free again once released', async () => {
    const { acquireLease, releaseLease, sweepLostReductions } = await import('@/lib/jobs/sweep');
    const name = `lease-test-${Date.now()}`;
    expect(await acquireLease(name, 'worker-a', 60_000)).toBe(true);
    expect(await acquireLease(name, 'worker-b', 60_000)).toBe(false);
    expect(await acquireLease(name, 'worker-a', 60_000)).toBe(true);
    await releaseLease(name, 'worker-a');
    expect(await acquireLease(name, 'worker-b', 60_000)).toBe(true);
    // An expired lease passes to the next worker that asks.
    expect(await acquireLease(name, 'worker-b', 1)).toBe(true);
    await waitFor('lease expired', async () => ((await acquireLease(name, 'worker-c', 60_000)) ? true : undefined));
    // Two sweeps at the same moment: only one of them gets to look at the requests.
    const [one, two] = await Promise.all([
      sweepLostReductions({ holder: 'sweeper-1', minAgeMs: 0 }),
      sweepLostReductions({ holder: 'sweeper-2', minAgeMs: 0 }),
    ]);
    expect([one.leased, two.leased].filter(Boolean)).toHaveLength(1);
  });
});
