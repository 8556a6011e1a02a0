'use client';
// Deletions that wait for their second person (C10): a PI of the file's team or an administrator confirms or
// refuses; the steward who asked may withdraw. Confirming removes the stored file for good.
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import {
  Badge,
  Button,
  ConfirmDialog,
  EmptyState,
  ErrorState,
  Field,
  inputClass,
  LoadingBlock,
  PageHeader,
  Panel,
} from '@/components/ui';
import { apiFetch, detailsByField } from '@/lib/api/client';
import type { DeletionRequestDto } from '@/lib/db/queries/retention';
import { formatDateTime } from '@/lib/format';

type Pending = { request: DeletionRequestDto; kind: 'confirm' | 'cancel' };

export function DeletionQueue({ userId, mayConfirm }: { userId: number; mayConfirm: 'all' | number[] }) {
  const qc = useQueryClient();
  const q = useQuery({
    queryKey: ['stewardship', 'deletions'],
    queryFn: () => apiFetch<{ requests: DeletionRequestDto[] }>('/api/deletion-requests'),
  });
  const [pending, setPending] = useState<Pending | null>(null);
  const [reason, setReason] = useState('');
  const act = useMutation({
    mutationFn: (p: Pending) =>
      apiFetch(`/api/deletion-requests/${p.request.id}/${p.kind}`, {
        method: 'POST',
        json: p.kind === 'cancel' ? { reason } : undefined,
      }),
    onSuccess: async () => {
      await qc.invalidateQueries({ queryKey: ['stewardship'] });
      setPending(null);
      setReason('');
    },
  });
  const canConfirm = (r: DeletionRequestDto) =>
    (mayConfirm === 'all' || mayConfirm.includes(r.teamId)) && r.requestedById !== userId;
  const errors = detailsByField(act.error);
  return (
    <div className="space-y-6">
      <PageHeader
        eyebrow="Data stewardship"
        title="Deletions waiting for a second person"
        description="A stored raw file is deleted only when a data steward asks and a second person, a PI of its team or an administrator, confirms. Confirming removes the stored file. This cannot be undone. A legal hold, or a keep-until date not yet passed, still stops the deletion at this step."
      />
      <Panel flush title="Waiting">
        {q.isPending ? (
          <div className="p-4">
            <LoadingBlock lines={4} />
          </div>
        ) : q.isError ? (
          <div className="p-4">
            <ErrorState message={q.error.message} onRetry={() => q.refetch()} />
          </div>
        ) : q.data.requests.length === 0 ? (
          <div className="p-4">
            <EmptyState title="No deletion is waiting" />
          </div>
        ) : (
          <ul className="divide-y divide-ink-100" data-testid="deletion-queue">
            {q.data.requests.map((r) => (
              <li key={r.id} className="flex flex-wrap items-start justify-between gap-3 px-5 py-4">
                <div className="min-w-0">
                  <p className="font-medium text-ink-900">{r.fileName}</p>
                  <p className="font-mono text-micro text-ink-500">SHA-256 {r.sha256}</p>
                  <p className="mt-1 text-small text-ink-700">
                    Asked by {r.requestedBy ?? 'someone'} on {formatDateTime(r.requestedAt)}: “{r.reason}”
                  </p>
                  {r.state === 'confirmed' ? (
                    <Badge tone="warn" className="mt-1">
                      confirmed by {r.confirmedBy}; the stored file is still to be removed
                    </Badge>
                  ) : null}
                </div>
                <div className="flex gap-2">
                  {canConfirm(r) ||
                  (r.state === 'confirmed' && (mayConfirm === 'all' || mayConfirm.includes(r.teamId))) ? (
                    <Button size="sm" variant="danger" onClick={() => setPending({ request: r, kind: 'confirm' })}>
                      {r.state === 'confirmed' ? 'Finish deletion' : 'Confirm deletion'}
                    </Button>
                  ) : null}
                  {r.state === 'waiting' ? (
                    <Button size="sm" variant="secondary" onClick={() => setPending({ request: r, kind: 'cancel' })}>
                      {r.requestedById === userId ? 'Withdraw' : 'Refuse'}
                    </Button>
                  ) : null}
                </div>
              </li>
            ))}
          </ul>
        )}
      </Panel>
      {pending ? (
        <ConfirmDialog
          title={
            pending.kind === 'confirm' ? `Delete ${pending.request.fileName} for good?` : 'Keep this file after all?'
          }
          confirmLabel={pending.kind === 'confirm' ? 'Delete the stored file' : 'Keep the file'}
          tone={pending.kind === 'confirm' ? 'danger' : 'primary'}
          busy={act.isPending}
          onConfirm={() => act.mutate(pending)}
          onCancel={() => {
            setPending(null);
            act.reset();
          }}
        >
          <div className="space-y-3">
            {pending.kind === 'confirm' ? (
              <p className="text-small text-ink-700">
                The raw file is removed from storage. This cannot be undone. Its name, checksum and this decision stay
                in the audit trail.
              </p>
            ) : (
              <Field label="Why (kept in the audit trail)" error={errors.reason}>
                {({ id, invalid }) => (
                  <textarea
                    id={id}
                    rows={3}
                    aria-invalid={invalid || undefined}
                    className={inputClass(invalid)}
                    value={reason}
                    onChange={(e) => setReason(e.target.value)}
                  />
                )}
              </Field>
            )}
            {act.error && !errors.reason ? (
              <p role="alert" className="text-small text-fault-600">
                {act.error.message}
              </p>
            ) : null}
          </div>
        </ConfirmDialog>
      ) : null}
    </div>
  );
}
