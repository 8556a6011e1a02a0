'use client';
// Flagging a scan (analysts, PRODUCT.md roles): a reason is required to set the flag and to clear it; both go to the
// audit trail. The campaign table's flag filter and the trend's hollow markers follow at once.
import { useMutation, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { campaignKeys } from '@/components/campaign/query-keys';
import { Button } from '@/components/ui';
import { inputClass } from '@/components/ui/input-class';
import { ApiError, apiFetch } from '@/lib/api/client';

export function FlagControl({
  scanId,
  campaignId,
  flagged,
  flagNote,
  canFlag,
}: {
  scanId: number;
  campaignId: number;
  flagged: boolean;
  flagNote: string | null;
  canFlag: boolean;
}) {
  const qc = useQueryClient();
  const [open, setOpen] = useState(false);
  const [reason, setReason] = useState('');
  const m = useMutation({
    mutationFn: (next: boolean) =>
      apiFetch(`/api/scans/${scanId}/flag`, { method: 'PUT', json: { flagged: next, reason } }),
    onSuccess: async () => {
      setOpen(false);
      setReason('');
      await Promise.all([
        qc.invalidateQueries({ queryKey: ['scan', scanId] }),
        qc.invalidateQueries({ queryKey: campaignKeys.all(campaignId) }),
      ]);
    },
  });
  const problem = m.error instanceof ApiError ? m.error : null;
  if (!flagged && !canFlag) return null;
  return (
    <div className="space-y-2" data-testid="flag-control" data-flagged={flagged ? 'true' : 'false'}>
      {flagged ? (
        <p className="text-small text-flare-800" data-testid="flag-note">
          <span aria-hidden="true">⚑ </span>
          <strong>Flagged</strong>
          {flagNote ? `: ${flagNote}` : ''}
        </p>
      ) : null}
      {canFlag && !open ? (
        <Button size="sm" variant="secondary" onClick={() => setOpen(true)} data-testid="flag-open">
          {flagged ? 'Clear the flag…' : 'Flag this scan…'}
        </Button>
      ) : null}
      {canFlag && open ? (
        <form
          className="space-y-2"
          onSubmit={(e) => {
            e.preventDefault();
            m.mutate(!flagged);
          }}
        >
          <label className="block text-micro text-ink-600" htmlFor={`flag-reason-${scanId}`}>
            {flagged ? 'Why the scan can be trusted again' : 'Why the scan needs a second look'}
          </label>
          <textarea
            id={`flag-reason-${scanId}`}
            rows={2}
            value={reason}
            onChange={(e) => setReason(e.target.value)}
            className={`${inputClass(!!problem)} text-small`}
            placeholder={flagged ? 'e.g. background re-measured, counts fine' : 'e.g. jet pressure dropped mid-scan'}
          />
          {problem ? (
            <div className="text-small text-fault-700" role="status">
              <p>{problem.message}</p>
              {problem.details.length ? (
                <ul className="list-disc pl-5">
                  {problem.details.map((d) => (
                    <li key={d}>{d}</li>
                  ))}
                </ul>
              ) : null}
            </div>
          ) : m.isError ? (
            <p className="text-small text-fault-700" role="status">
              {String(m.error)}
            </p>
          ) : null}
          <div className="flex gap-2">
            <Button size="sm" type="submit" isLoading={m.isPending} data-testid="flag-submit">
              {flagged ? 'Clear the flag' : 'Flag the scan'}
            </Button>
            <Button size="sm" variant="ghost" onClick={() => setOpen(false)}>
              Cancel
            </Button>
          </div>
        </form>
      ) : null}
    </div>
  );
}
