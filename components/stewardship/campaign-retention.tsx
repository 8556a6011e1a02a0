'use client';
// Retention, embargo and legal hold of a campaign (C10): set by data stewards, read by everyone of the team.
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { Badge, Button, ConfirmDialog, Field, inputClass, Panel } from '@/components/ui';
import { apiFetch, detailsByField } from '@/lib/api/client';
import { formatBytes, formatDay } from '@/lib/format';
import type { CampaignArchiveProgress } from '@/lib/stewardship/archive';

export interface CampaignRetention {
  retentionUntil: string | null;
  embargoUntil: string | null;
  legalHold: boolean;
  legalHoldNote: string | null;
}

export function CampaignRetentionPanel({
  campaignId,
  value,
  editable,
}: {
  campaignId: number;
  value: CampaignRetention;
  editable: boolean;
}) {
  const qc = useQueryClient();
  const [retention, setRetention] = useState(value.retentionUntil ?? '');
  const [embargo, setEmbargo] = useState(value.embargoUntil ?? '');
  const [hold, setHold] = useState(value.legalHold);
  const [note, setNote] = useState(value.legalHoldNote ?? '');
  const [saved, setSaved] = useState(false);
  const save = useMutation({
    mutationFn: () =>
      apiFetch(`/api/campaigns/${campaignId}/retention`, {
        method: 'PUT',
        json: {
          retentionUntil: retention || null,
          embargoUntil: embargo || null,
          legalHold: hold,
          legalHoldNote: note,
        },
      }),
    onSuccess: async () => {
      await qc.invalidateQueries({ queryKey: ['campaign', campaignId, 'citation'] });
      setSaved(true);
    },
  });
  const errors = detailsByField(save.error);
  return (
    <Panel title="Retention and embargo" data-testid="campaign-retention">
      <ul className="mb-3 space-y-1.5 text-small text-ink-600" data-testid="retention-meanings">
        <li>
          <span className="font-medium text-ink-800">Keep files until:</span> no file of this campaign can be deleted
          before the end of this day. Without a date, files are kept and cannot be deleted.
        </li>
        <li>
          <span className="font-medium text-ink-800">Embargo:</span> until this day the files stay closed. The citation
          records and the public page name the dataset and its creators, but list no files. From this day on they do.
        </li>
        <li>
          <span className="font-medium text-ink-800">Legal hold:</span> while it is on, no file of this campaign can be
          deleted, whatever its date, and deletions already asked for cannot be confirmed.
        </li>
      </ul>
      {editable ? (
        <div className="space-y-3">
          <Field
            label="Keep files until"
            value={retention}
            placeholder="YYYY-MM-DD"
            error={errors.retentionUntil}
            onChange={(e) => {
              setSaved(false);
              setRetention(e.target.value);
            }}
          />
          <Field
            label="Embargo until"
            value={embargo}
            placeholder="YYYY-MM-DD"
            error={errors.embargoUntil}
            onChange={(e) => {
              setSaved(false);
              setEmbargo(e.target.value);
            }}
          />
          <label className="flex items-center gap-2 text-small text-ink-800">
            <input
              type="checkbox"
              checked={hold}
              onChange={(e) => {
                setSaved(false);
                setHold(e.target.checked);
              }}
            />
            Legal hold: block every deletion in this campaign
          </label>
          {hold ? (
            <Field label="Why the hold applies" error={errors.legalHoldNote}>
              {({ id, invalid }) => (
                <textarea
                  id={id}
                  rows={2}
                  aria-invalid={invalid || undefined}
                  className={inputClass(invalid)}
                  value={note}
                  onChange={(e) => setNote(e.target.value)}
                />
              )}
            </Field>
          ) : null}
          <div className="flex items-center gap-3">
            <Button size="sm" isLoading={save.isPending} onClick={() => save.mutate()}>
              Save retention
            </Button>
            {saved ? <span className="text-small text-lobe-700">Saved.</span> : null}
          </div>
          {save.error && Object.keys(errors).length === 0 ? (
            <p role="alert" className="text-small text-fault-600">
              {save.error.message}
            </p>
          ) : null}
        </div>
      ) : (
        <dl className="grid grid-cols-2 gap-2 text-small">
          <dt className="text-ink-500">Keep files until</dt>
          <dd>{value.retentionUntil ? formatDay(value.retentionUntil) : 'no date: files are kept'}</dd>
          <dt className="text-ink-500">Embargo until</dt>
          <dd>{value.embargoUntil ? formatDay(value.embargoUntil) : 'none'}</dd>
          {value.legalHold ? (
            <>
              <dt className="text-ink-500">Legal hold</dt>
              <dd>
                <Badge tone="bad">on</Badge> {value.legalHoldNote}
              </dd>
            </>
          ) : null}
        </dl>
      )}
      <CampaignArchive campaignId={campaignId} editable={editable} />
    </Panel>
  );
}

/**
 * Archive state of the campaign's stored files, and (for data stewards) archiving or restoring all of them: one
 * queued job per file, whose progress shows here while they run.
 */
function CampaignArchive({ campaignId, editable }: { campaignId: number; editable: boolean }) {
  const qc = useQueryClient();
  const [confirming, setConfirming] = useState<'archive' | 'restore' | null>(null);
  const query = useQuery({
    queryKey: ['campaign', campaignId, 'archive'],
    queryFn: () => apiFetch<{ progress: CampaignArchiveProgress }>(`/api/campaigns/${campaignId}/archive`),
    refetchInterval: (q) => {
      const b = q.state.data?.progress.byState;
      return b && b.archiving + b.restoring > 0 ? 2000 : false;
    },
  });
  const move = useMutation({
    mutationFn: (direction: 'archive' | 'restore') =>
      apiFetch(`/api/campaigns/${campaignId}/archive`, { method: 'POST', json: { direction } }),
    onSuccess: async () => {
      setConfirming(null);
      await qc.invalidateQueries({ queryKey: ['campaign', campaignId, 'archive'] });
    },
  });
  const p = query.data?.progress;
  if (!p) return null;
  const moving = p.byState.archiving + p.byState.restoring;
  const done = p.files - moving;
  return (
    <div className="mt-4 border-t border-ink-100 pt-4" data-testid="campaign-archive">
      <h3 className="text-small font-semibold text-ink-900">Archive</h3>
      <p className="mt-1 text-small text-ink-700">
        {p.files} stored file{p.files === 1 ? '' : 's'} ({formatBytes(p.bytes)}): {p.byState.online} online,{' '}
        {p.byState.archived} archived
        {moving ? `, ${p.byState.archiving} being archived, ${p.byState.restoring} being restored` : ''}.
      </p>
      {moving ? (
        <div className="mt-2" role="status" aria-label="Archive progress">
          <div className="h-1.5 w-full overflow-hidden rounded-full bg-ink-100" aria-hidden="true">
            <div
              className="h-full bg-lobe-600"
              style={{ width: `${Math.round((100 * done) / Math.max(1, p.files))}%` }}
            />
          </div>
          <p className="mt-1 text-micro text-ink-500">
            {done} of {p.files} files in place; the rest are being copied and checked.
          </p>
        </div>
      ) : null}
      {editable ? (
        <div className="mt-3 flex flex-wrap items-center gap-2">
          <Button
            size="sm"
            variant="secondary"
            disabled={p.byState.online === 0}
            onClick={() => setConfirming('archive')}
          >
            Archive {p.byState.online} online file{p.byState.online === 1 ? '' : 's'}
          </Button>
          <Button
            size="sm"
            variant="secondary"
            disabled={p.byState.archived === 0}
            onClick={() => setConfirming('restore')}
          >
            Restore {p.byState.archived} archived file{p.byState.archived === 1 ? '' : 's'}
          </Button>
        </div>
      ) : null}
      {confirming ? (
        <ConfirmDialog
          title={confirming === 'archive' ? 'Archive the whole campaign?' : 'Restore the whole campaign?'}
          confirmLabel={confirming === 'archive' ? 'Archive the files' : 'Restore the files'}
          busy={move.isPending}
          onConfirm={() => move.mutate(confirming)}
          onCancel={() => {
            move.reset();
            setConfirming(null);
          }}
        >
          <p className="text-small text-ink-700">
            {confirming === 'archive'
              ? 'Each online file is copied to the archive bucket in the archival storage class; its online copy is removed only after the archive copy’s SHA-256 matches. Archived scans cannot be reduced until they are restored.'
              : 'Each archived file is copied back online and checked against its SHA-256; then its archive copy is removed.'}
          </p>
          {move.error ? (
            <p role="alert" className="mt-2 text-small text-fault-600">
              {move.error.message}
            </p>
          ) : null}
        </ConfirmDialog>
      ) : null}
    </div>
  );
}
