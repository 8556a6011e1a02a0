// Many scans of one campaign asked for at the same moment (an operator's shift of files accepted together, a
// campaign batch) against the real MariaDB: every scan gets exactly one open reduction_jobs row and one queue job.
// Before the fix, the lookup of an open request took gap locks on reduction_jobs (`FOR UPDATE` on a range), and two
// transactions inserting next to each other's gaps deadlocked (InnoDB errno 1213): one scan was left `uploaded`
// with no request at all. Repeated requests for one scan still collapse onto one row (the deterministic job id).
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import type { World } from './helpers/world';

vi.mock('server-only', () => ({}));

const { makeWorld } = await import('./helpers/world');
const { closeSequelize } = await import('@/lib/db');
const { enqueueReductionForScan } = await import('@/lib/queue/enqueue');
const { closeReductionQueue } = await import('@/lib/queue/reduction-queue');
const { closeS3Client } = await import('@/lib/storage/s3');
const { ReductionJob, Scan } = await import('@/models');

let w: World;
beforeAll(async () => {
  w = await makeWorld({ data: true });
});
afterAll(async () => {
  await w?.cleanup();
  await closeReductionQueue();
  closeS3Client();
  await closeSequelize();
});

describe('enqueueReductionForScan under concurrency', () => {
  it('12 different scans asked for at once: each is queued once, none is lost to a deadlock', async () => {
    const scanIds: number[] = [];
    for (let i = 0; i < 12; i++) scanIds.push(await w.freshScan(w.a));
    const outcomes = await Promise.allSettled(scanIds.map((id) => enqueueReductionForScan(id)));
    const refused = outcomes.filter((o) => o.status === 'rejected');
    expect(refused.map((o) => String((o as PromiseRejectedResult).reason))).toEqual([]);
    for (const o of outcomes) expect(o.status === 'fulfilled' && o.value.queued).toBe(true);
    const rows = await ReductionJob.findAll({ where: { scan_id: scanIds, status: ['queued', 'running'] } });
    expect(rows.map((r) => r.scan_id).sort((a, b) => a - b)).toEqual([...scanIds].sort((a, b) => a - b));
    const scans = await Scan.findAll({ where: { id: scanIds }, attributes: ['id', 'status'] });
    for (const s of scans) expect(['queued', 'reducing']).toContain(s.status);
  });

  it('one scan asked for 6 times at once collapses onto one open request', async () => {
    const scanId = await w.freshScan(w.a);
    const outcomes = await Promise.all(Array.from({ length: 6 }, () => enqueueReductionForScan(scanId)));
    const ids = new Set(outcomes.map((o) => (o.queued ? o.reductionJobId : -1)));
    expect([...ids]).toHaveLength(1);
    expect(await ReductionJob.count({ where: { scan_id: scanId, status: ['queued', 'running'] } })).toBe(1);
  });
});
