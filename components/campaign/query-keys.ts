// One place for the TanStack query keys of the campaign and scan views. Everything about a campaign lives under
// ['campaign', id] (the overview is that key itself), so a single invalidation of the prefix refreshes the overview,
// the scan table, the trend and the batches together when the worker settles.
import type { ScanStatus } from '@/models/files';

export const campaignKeys = {
  all: (campaignId: number) => ['campaign', campaignId] as const,
  scans: (campaignId: number, params: string) => ['campaign', campaignId, 'scans', params] as const,
  trend: (campaignId: number) => ['campaign', campaignId, 'trend'] as const,
  batches: (campaignId: number) => ['campaign', campaignId, 'batches'] as const,
  helicity: (campaignId: number) => ['campaign', campaignId, 'helicity'] as const,
};

/** How often the views ask again while a worker has something of theirs (ms). */
export const FOLLOW_INTERVAL_MS = 2000;
/** How often the campaign overview asks when nothing of it is with a worker (new scans from other pages). */
export const IDLE_INTERVAL_MS = 20_000;

/** States a scan passes through on its own (the worker moves it on); "uploaded" waits for a person, not a worker. */
export const WORKER_STATES: readonly ScanStatus[] = ['queued', 'reducing'];

/** True while a worker still has scans of these counts to take or finish. */
export function workerBusy(counts: Partial<Record<ScanStatus, number>> | undefined): boolean {
  return !!counts && WORKER_STATES.some((s) => (counts[s] ?? 0) > 0);
}
