'use client';
// Retention, embargo and legal hold of a campaign (C10): set by data stewards, read by everyone of the team.
import { useMutation, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { Badge, Button, Field, inputClass, Panel } from '@/components/ui';
import { apiFetch, detailsByField } from '@/lib/api/client';
import { formatDay } from '@/lib/format';

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
    </Panel>
  );
}
