'use client';
// The steward's actions on one row of the file register (C10): the file's own retention, embargo and legal hold,
// and asking for its deletion (step one of two; a PI of the team or an administrator confirms on the deletion page),
// archiving and restoring (a job copies, verifies the SHA-256, and only then removes the old copy).
import { useMutation, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { ConfirmDialog, Field, inputClass } from '@/components/ui';
import { apiFetch, detailsByField } from '@/lib/api/client';
import type { RegisterRowDto } from '@/lib/db/queries/file-register';

export function FileRowActions({ row }: { row: RegisterRowDto }) {
  const qc = useQueryClient();
  const [open, setOpen] = useState<'retention' | 'delete' | 'archive' | 'restore' | null>(null);
  const [retention, setRetention] = useState(row.retentionOwn ? (row.retentionUntil ?? '') : '');
  const [embargo, setEmbargo] = useState(row.embargoUntil ?? '');
  const [hold, setHold] = useState(row.legalHold);
  const [reason, setReason] = useState('');
  const refresh = () => qc.invalidateQueries({ queryKey: ['stewardship'] });
  const saveRetention = useMutation({
    mutationFn: () =>
      apiFetch(`/api/raw-files/${row.id}/retention`, {
        method: 'PUT',
        json: { retentionUntil: retention || null, embargoUntil: embargo || null, legalHold: hold },
      }),
    onSuccess: async () => {
      await refresh();
      setOpen(null);
    },
  });
  const askDeletion = useMutation({
    mutationFn: () => apiFetch(`/api/raw-files/${row.id}/deletion`, { method: 'POST', json: { reason } }),
    onSuccess: async () => {
      await refresh();
      setOpen(null);
    },
  });
  const move = useMutation({
    mutationFn: (kind: 'archive' | 'restore') =>
      apiFetch(`/api/raw-files/${row.id}/${kind}`, { method: 'POST', json: {} }),
    onSuccess: async () => {
      await refresh();
      setOpen(null);
    },
  });
  const retentionErrors = detailsByField(saveRetention.error);
  const deleteErrors = detailsByField(askDeletion.error);
  return (
    <div className="mt-1 flex flex-wrap gap-x-3 text-micro">
      <button type="button" className="font-medium text-lobe-700 hover:underline" onClick={() => setOpen('retention')}>
        Retention…
      </button>
      {row.archiveState === 'online' && !row.deletion ? (
        <button type="button" className="font-medium text-lobe-700 hover:underline" onClick={() => setOpen('archive')}>
          Archive…
        </button>
      ) : null}
      {row.archiveState === 'archived' ? (
        <button type="button" className="font-medium text-lobe-700 hover:underline" onClick={() => setOpen('restore')}>
          Restore…
        </button>
      ) : null}
      {row.deletion ? null : (
        <button type="button" className="font-medium text-fault-600 hover:underline" onClick={() => setOpen('delete')}>
          Ask to delete…
        </button>
      )}
      {open === 'retention' ? (
        <ConfirmDialog
          title={`Retention of ${row.fileName}`}
          confirmLabel="Save"
          busy={saveRetention.isPending}
          onConfirm={() => saveRetention.mutate()}
          onCancel={() => setOpen(null)}
        >
          <div className="space-y-3">
            <p className="text-small text-ink-600">
              Set these only where this file differs from its campaign; empty fields follow the campaign.
            </p>
            <Field
              label="Keep until (YYYY-MM-DD)"
              value={retention}
              placeholder="2036-12-31"
              error={retentionErrors.retentionUntil}
              onChange={(e) => setRetention(e.target.value)}
            />
            <Field
              label="Embargo until (YYYY-MM-DD)"
              value={embargo}
              hint="Until this day this file is left out of the citation records and the public file list."
              error={retentionErrors.embargoUntil}
              onChange={(e) => setEmbargo(e.target.value)}
            />
            <label className="flex items-center gap-2 text-small text-ink-800">
              <input type="checkbox" checked={hold} onChange={(e) => setHold(e.target.checked)} />
              Legal hold: nobody can delete this file while the hold is on
            </label>
            {saveRetention.error && !Object.keys(retentionErrors).length ? (
              <p role="alert" className="text-small text-fault-600">
                {saveRetention.error.message}
              </p>
            ) : null}
          </div>
        </ConfirmDialog>
      ) : null}
      {open === 'archive' || open === 'restore' ? (
        <ConfirmDialog
          title={open === 'archive' ? `Archive ${row.fileName}?` : `Restore ${row.fileName}?`}
          confirmLabel={open === 'archive' ? 'Archive the file' : 'Restore the file'}
          busy={move.isPending}
          onConfirm={() => move.mutate(open)}
          onCancel={() => {
            move.reset();
            setOpen(null);
          }}
        >
          <div className="space-y-3 text-small text-ink-700">
            {open === 'archive' ? (
              <p>
                The file is copied to the archive bucket in the archival storage class, the copy&rsquo;s SHA-256 is
                checked against <span className="font-mono">{row.sha256.slice(0, 12)}…</span>, and only then is the
                online copy removed. While it is archived its scans cannot be reduced; a data steward or the
                team&rsquo;s PI can restore it at any time.
              </p>
            ) : (
              <p>
                The archived copy is copied back online and its SHA-256 checked; then the archive copy is removed and
                the file&rsquo;s scans can be reduced again.
              </p>
            )}
            {move.error ? (
              <p role="alert" className="text-fault-600">
                {move.error.message}
              </p>
            ) : null}
          </div>
        </ConfirmDialog>
      ) : null}
      {open === 'delete' ? (
        <ConfirmDialog
          title={`Ask to delete ${row.fileName}?`}
          confirmLabel="Ask for deletion"
          tone="danger"
          busy={askDeletion.isPending}
          onConfirm={() => askDeletion.mutate()}
          onCancel={() => setOpen(null)}
        >
          <div className="space-y-3">
            <p className="text-small text-ink-700">
              Nothing is deleted yet. A PI of {row.teamName} or an administrator must confirm. Then the stored file is
              removed, and that cannot be undone. A file under a legal hold, or before its keep-until date has passed,
              cannot be asked for.
            </p>
            <Field label="Reason (kept in the audit trail)" error={deleteErrors.reason}>
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
            {askDeletion.error && !deleteErrors.reason ? (
              <p role="alert" className="text-small text-fault-600">
                {askDeletion.error.message}
              </p>
            ) : null}
          </div>
        </ConfirmDialog>
      ) : null}
    </div>
  );
}
