'use client';

import { useQuery, useQueryClient } from '@tanstack/react-query';
import { useRouter } from 'next/navigation';
import { useCallback } from 'react';
import { ErrorState, Panel } from '@/components/ui';
import { apiFetch } from '@/lib/api/client';
import type { Receipt } from '@/lib/ingest/receipt';
import type { ShiftViewDto } from '@/lib/ingest/types';
import { CloseShiftPanel, ReceiptView } from './close-shift-panel';
import { DropPanel } from './drop-panel';
import { ShiftLogPanel } from './shift-log-panel';
import { StoredFiles } from './stored-files';
import { useIngestQueue } from './use-ingest-queue';
import { unsentCount, useLeaveWarning } from './use-leave-warning';

/** The interactive part of the shift page: drop, check, send, log, release, close. */
export function ShiftWorkbench({ initial, initialReceipt }: { initial: ShiftViewDto; initialReceipt: Receipt | null }) {
  const shiftId = initial.shift.id;
  const qc = useQueryClient();
  const view = useQuery({
    queryKey: ['shift', shiftId],
    queryFn: () => apiFetch<ShiftViewDto>(`/api/shifts/${shiftId}`),
    initialData: initial,
    // follow the worker: "Stored in this shift" asks again while any of its scans is queued or reducing, and while
    // a worker verifies a large file, until the verdict is there
    refetchInterval: (q) => {
      const d = q.state.data;
      if (d?.files.some((f) => f.scanStatus === 'queued' || f.scanStatus === 'reducing')) return 2000;
      return d?.verifying?.length ? 3_000 : false;
    },
  });
  const closed = view.data.shift.status === 'closed';
  const receipt = useQuery({
    queryKey: ['shift', shiftId, 'receipt'],
    queryFn: async () => (await apiFetch<{ receipt: Receipt }>(`/api/shifts/${shiftId}/receipt`)).receipt,
    initialData: initialReceipt ?? undefined,
    enabled: closed,
  });
  const router = useRouter();
  const refresh = useCallback(() => {
    void qc.invalidateQueries({ queryKey: ['shift', shiftId] });
  }, [qc, shiftId]);
  const queue = useIngestQueue({ shiftId, onStored: refresh, campaign: initial.shift.campaign });
  const data = view.data;
  const busy = queue.items.filter((i) => ['queued', 'sending', 'waiting-hash', 'verifying'].includes(i.phase)).length;
  useLeaveWarning(unsentCount(queue.items));

  return (
    <div className="grid gap-6 lg:grid-cols-[minmax(0,1fr)_22rem]">
      <div className="space-y-6">
        {view.isError ? (
          <ErrorState message="The shift could not be refreshed." onRetry={() => view.refetch()} />
        ) : null}
        {closed ? (
          <div id="receipt" className="scroll-mt-4">
            <Panel title="Shift receipt" data-testid="receipt-panel">
              {receipt.data ? (
                <ReceiptView receipt={receipt.data} mailedAt={data.shift.receiptSentAt} />
              ) : (
                <p className="text-small text-ink-500">Loading the receipt…</p>
              )}
            </Panel>
          </div>
        ) : (
          <DropPanel queue={queue} log={data.log} unfinished={data.unfinished} canUpload={data.permissions.upload} />
        )}
        <StoredFiles
          files={data.files}
          verifying={data.verifying ?? []}
          canRelease={data.permissions.release}
          canUpload={data.permissions.upload}
          onChanged={refresh}
          suggest={{ target: data.shift.campaign.target, wavelengthNm: data.shift.campaign.wavelengthNm }}
          onReplace={(file, rawFileId) => queue.addFiles([file], rawFileId)}
        />
      </div>
      <div className="space-y-6">
        <ShiftLogPanel
          shiftId={shiftId}
          entries={data.log}
          canLog={data.permissions.log}
          onAdded={refresh}
          campaignTarget={data.shift.campaign.target}
        />
        <CloseShiftPanel
          shiftId={shiftId}
          canClose={data.permissions.close}
          busyUploads={busy}
          onClosed={() => {
            refresh();
            // the page header (Open/Closed badge, closing time) is server-rendered
            router.refresh();
          }}
        />
      </div>
    </div>
  );
}
