'use client';

import { useQueryClient } from '@tanstack/react-query';
import { useRouter } from 'next/navigation';
import { type FormEvent, useState } from 'react';
import { Button } from '@/components/ui/button';
import { Field } from '@/components/ui/field';
import { inputClass } from '@/components/ui/input-class';
import { ApiError, apiFetch, detailsByField } from '@/lib/api/client';

export interface CampaignChoice {
  id: number;
  label: string;
}

export function ShiftForm({
  campaigns,
  defaultCampaignId,
}: {
  campaigns: CampaignChoice[];
  defaultCampaignId?: number;
}) {
  const router = useRouter();
  const queryClient = useQueryClient();
  const [pending, setPending] = useState(false);
  const [error, setError] = useState<string | null>(null);
  const [fields, setFields] = useState<Record<string, string>>({});

  async function onSubmit(e: FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const f = new FormData(e.currentTarget);
    const campaignId = String(f.get('campaignId') ?? '');
    const body = { campaignId: campaignId === '' ? undefined : campaignId, title: String(f.get('title') ?? '') };
    if (!body.campaignId) {
      setError(null);
      setFields({ campaignId: 'Choose the campaign this shift belongs to.' });
      return;
    }
    setPending(true);
    setError(null);
    setFields({});
    try {
      const r = await apiFetch<{ shift: { id: number } }>('/api/shifts', { method: 'POST', json: body });
      await queryClient.invalidateQueries({ queryKey: ['campaigns'] });
      router.push(`/shifts/${r.shift.id}`);
    } catch (err) {
      setFields(detailsByField(err));
      setError(err instanceof ApiError ? err.message : 'The shift could not be opened.');
      setPending(false);
    }
  }

  return (
    <form onSubmit={onSubmit} noValidate className="space-y-5" data-testid="shift-form">
      {error ? (
        <p role="alert" className="rounded-md border border-fault-100 bg-fault-50 px-3 py-2 text-small text-fault-700">
          {error}
        </p>
      ) : null}
      <Field label="Campaign" error={fields.campaignId}>
        {({ id, describedBy, invalid }) => (
          <select
            id={id}
            name="campaignId"
            defaultValue={defaultCampaignId ?? (campaigns.length === 1 ? campaigns[0]?.id : undefined) ?? ''}
            aria-describedby={describedBy}
            aria-invalid={invalid || undefined}
            className={inputClass(invalid)}
          >
            <option value="">Choose a campaign…</option>
            {campaigns.map((c) => (
              <option key={c.id} value={c.id}>
                {c.label}
              </option>
            ))}
          </select>
        )}
      </Field>
      <Field
        label="Title (optional)"
        name="title"
        maxLength={160}
        placeholder="e.g. Night shift, new MCP voltage"
        hint="Without a title the shift is named after today's date."
        error={fields.title}
      />
      <div className="flex items-center gap-3">
        <Button type="submit" isLoading={pending}>
          Open the shift
        </Button>
        <Button type="button" variant="ghost" onClick={() => router.back()}>
          Cancel
        </Button>
      </div>
    </form>
  );
}
