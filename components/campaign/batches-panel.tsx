'use client';
// Re-reducing the whole campaign with the current approved versions, and the progress of recent batches.
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { Button, ErrorState } from '@/components/ui';
import { apiFetch } from '@/lib/api/client';
import { formatDateTime } from '@/lib/format';
import { campaignKeys, FOLLOW_INTERVAL_MS } from './query-keys';
import type { BatchDto } from './types';

/** What became of the batch this panel started, from the batch list (which follows the worker). */
function batchWords(started: { batchId: number; total: number; queued: number }, b: BatchDto | undefined): string {
  if (!b || b.queued + b.running > 0) {
    return `Batch ${started.batchId}: ${started.queued} of ${started.total} scans queued.`;
  }
  return `Batch ${started.batchId} finished: ${b.succeeded} reduced${b.failed ? `, ${b.failed} failed` : ''}.`;
}

export function BatchesPanel({
  campaignId,
  canStart,
  currentLabel,
  compact = false,
}: {
  campaignId: number;
  canStart: boolean;
  currentLabel: string | null;
  compact?: boolean;
}) {
  const qc = useQueryClient();
  const q = useQuery({
    queryKey: campaignKeys.batches(campaignId),
    queryFn: () => apiFetch<{ batches: BatchDto[] }>(`/api/campaigns/${campaignId}/reduce`),
    refetchInterval: (qq) =>
      qq.state.data?.batches.some((b) => b.queued + b.running > 0) ? FOLLOW_INTERVAL_MS : false,
  });
  const m = useMutation({
    mutationFn: () =>
      apiFetch<{ batchId: number; total: number; queued: number }>(`/api/campaigns/${campaignId}/reduce`, {
        method: 'POST',
        json: {},
      }),
    // the overview then sees the queued scans and follows the worker until they settle
    onSuccess: () => qc.invalidateQueries({ queryKey: campaignKeys.all(campaignId) }),
  });
  const batches = q.data?.batches ?? [];
  return (
    <div className="space-y-3" data-testid="batches-panel">
      {canStart ? (
        <div className="flex flex-wrap items-center gap-3">
          <Button size="sm" variant="secondary" onClick={() => m.mutate()} disabled={m.isPending || !currentLabel}>
            {m.isPending ? 'Queueing…' : `Re-reduce all scans with ${currentLabel ?? 'the current versions'}`}
          </Button>
          <span className="text-micro text-ink-500">Earlier results stay, linked to the versions that made them.</span>
        </div>
      ) : null}
      {m.isError ? <ErrorState message={m.error.message} /> : null}
      {m.isSuccess ? (
        <p className="text-small text-lobe-700" role="status" data-testid="batch-started">
          {batchWords(
            m.data,
            batches.find((b) => b.id === m.data.batchId),
          )}
        </p>
      ) : null}
      {batches.slice(0, compact ? 1 : 5).map((b) => {
        const done = b.succeeded + b.failed;
        const pct = b.total ? Math.round((100 * done) / b.total) : 0;
        return (
          <div key={b.id} className="text-small">
            <div className="flex justify-between text-ink-700">
              <span>
                Batch {b.id}: cal v{b.calibrationVersion} · set v{b.settingsVersion} · {formatDateTime(b.createdAt)}
              </span>
              <span>
                {b.succeeded} done{b.failed ? `, ${b.failed} failed` : ''} of {b.total}
              </span>
            </div>
            <div className="mt-1 h-1.5 overflow-hidden rounded-full bg-ink-100">
              <div className="h-full bg-lobe-500" style={{ width: `${pct}%` }} />
            </div>
          </div>
        );
      })}
    </div>
  );
}
