// The hand-off from ingest to the reduction jobs (C5): the jobs helper's lib/queue/enqueue.ts queues the scan.
// It is loaded lazily (the web server loads BullMQ only when a file is accepted), and if the module is missing
// at run time an accepted scan simply waits with status `uploaded`.
import { log } from '@/lib/log';

const ilog = log.child({ surface: 'upload' });

type Enqueue = (scanId: number) => Promise<unknown>;

function isModuleMissing(err: unknown): boolean {
  const e = err as { code?: string; message?: string };
  return (
    e?.code === 'ERR_MODULE_NOT_FOUND' ||
    e?.code === 'MODULE_NOT_FOUND' ||
    /Cannot find module|Failed to (load|resolve)|Module not found/i.test(e?.message ?? '')
  );
}

async function loadEnqueue(): Promise<Enqueue | null> {
  try {
    const mod = (await import('@/lib/queue/enqueue')) as { enqueueReductionForScan?: Enqueue };
    return typeof mod.enqueueReductionForScan === 'function' ? mod.enqueueReductionForScan : null;
  } catch (err) {
    if (isModuleMissing(err)) return null;
    throw err;
  }
}

/**
 * Called once for every scan whose file was accepted (or released). Queues its reduction when the queue module
 * is present; otherwise the scan stays `uploaded`. Never throws: the file is safely stored either way, and a
 * failure to queue is logged (the scan can be reduced later from the campaign page).
 *
 * @returns whether a reduction was queued
 */
export async function onScanAccepted(scanId: number): Promise<boolean> {
  try {
    const enqueue = await loadEnqueue();
    if (!enqueue) {
      ilog.info('no reduction queue yet; scan stays uploaded', { scanId });
      return false;
    }
    await enqueue(scanId);
    return true;
  } catch (err) {
    ilog.error('could not queue the reduction of an accepted scan', { scanId, err });
    return false;
  }
}
