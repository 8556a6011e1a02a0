'use client';
// The scan page's notice when the scan's raw file is in the archive (issue 14): the scan cannot be reduced until the
// file is restored, and those who may (the team's PI, data stewards) get the button that asks for the restore.
import { useMutation, useQueryClient } from '@tanstack/react-query';
import { Button } from '@/components/ui';
import { apiFetch } from '@/lib/api/client';
import { ARCHIVED_REDUCTION_MESSAGE } from '@/lib/stewardship/archive-words';

export function ArchivedNotice({
  scanId,
  rawFileId,
  state,
  canRestore,
}: {
  scanId: number;
  rawFileId: number;
  state: 'archiving' | 'archived' | 'restoring';
  canRestore: boolean;
}) {
  const qc = useQueryClient();
  const restore = useMutation({
    mutationFn: () => apiFetch(`/api/raw-files/${rawFileId}/restore`, { method: 'POST', json: {} }),
    onSuccess: () => qc.invalidateQueries({ queryKey: ['scan', scanId] }),
  });
  return (
    <div
      role="status"
      data-testid="scan-archived"
      className="rounded-md border border-flare-200 bg-flare-50 px-4 py-3 text-small text-flare-900"
    >
      {state === 'restoring' ? (
        <p>The raw file is being restored from the archive; the scan can be reduced again once it is online.</p>
      ) : state === 'archiving' ? (
        <p>The raw file is being moved to the archive; it cannot be reduced until it is restored.</p>
      ) : (
        <>
          <p>{ARCHIVED_REDUCTION_MESSAGE}</p>
          {canRestore ? (
            <div className="mt-2 flex items-center gap-3">
              <Button size="sm" variant="secondary" isLoading={restore.isPending} onClick={() => restore.mutate()}>
                Restore the raw file
              </Button>
              {restore.error ? (
                <span role="alert" className="text-fault-700">
                  {restore.error.message}
                </span>
              ) : null}
            </div>
          ) : null}
        </>
      )}
    </div>
  );
}
