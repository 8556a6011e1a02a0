'use client';

import { useQueryClient } from '@tanstack/react-query';
import { useRouter } from 'next/navigation';
import { type FormEvent, useState } from 'react';
import { Button } from '@/components/ui/button';
import { Field } from '@/components/ui/field';
import { inputClass } from '@/components/ui/input-class';
import { ApiError, apiFetch, detailsByField } from '@/lib/api/client';
import { EXPERIMENT_KINDS } from '@/reduction/formats';
import { KIND_LABEL } from './labels';

export function CampaignForm({ teamId, teamName }: { teamId: number; teamName: string }) {
  const router = useRouter();
  const queryClient = useQueryClient();
  const [pending, setPending] = useState(false);
  const [error, setError] = useState<string | null>(null);
  const [fields, setFields] = useState<Record<string, string>>({});

  async function onSubmit(e: FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const f = new FormData(e.currentTarget);
    const wavelength = String(f.get('wavelengthNm') ?? '').trim();
    const body = {
      teamId,
      name: String(f.get('name') ?? ''),
      target: String(f.get('target') ?? ''),
      wavelengthNm: wavelength === '' ? undefined : wavelength,
      experimentKind: String(f.get('experimentKind') ?? ''),
      description: String(f.get('description') ?? ''),
    };
    setPending(true);
    setError(null);
    setFields({});
    try {
      const r = await apiFetch<{ campaign: { id: number } }>('/api/campaigns', { method: 'POST', json: body });
      await queryClient.invalidateQueries({ queryKey: ['campaigns'] });
      router.push(`/campaigns/${r.campaign.id}`);
    } catch (err) {
      const byField = detailsByField(err);
      setFields(byField);
      setError(err instanceof ApiError ? err.message : 'The campaign could not be created.');
      setPending(false);
    }
  }

  return (
    <form onSubmit={onSubmit} noValidate className="space-y-5" data-testid="campaign-form">
      {error ? (
        <p role="alert" className="rounded-md border border-fault-100 bg-fault-50 px-3 py-2 text-small text-fault-700">
          {error}
        </p>
      ) : null}
      <p className="text-small text-ink-600">
        The campaign belongs to <strong className="font-semibold text-ink-800">{teamName}</strong>.
      </p>
      <Field
        label="Name"
        name="name"
        required
        maxLength={160}
        placeholder="e.g. Ar 800 nm elliptical, spring run"
        error={fields.name}
      />
      <div className="grid gap-5 sm:grid-cols-2">
        <Field
          label="Target"
          name="target"
          required
          maxLength={32}
          placeholder="He, Ne, Ar, N2…"
          hint="The atom or molecule in the jet."
          error={fields.target}
        />
        <Field
          label="Fundamental wavelength (nm)"
          name="wavelengthNm"
          type="number"
          inputMode="decimal"
          step="any"
          min={100}
          max={20000}
          required
          placeholder="800"
          error={fields.wavelengthNm}
        />
      </div>
      <Field label="Kind of experiment" error={fields.experimentKind}>
        {({ id, describedBy, invalid }) => (
          <select
            id={id}
            name="experimentKind"
            defaultValue="angular_streaking"
            aria-describedby={describedBy}
            aria-invalid={invalid || undefined}
            className={inputClass(invalid)}
          >
            {EXPERIMENT_KINDS.map((k) => (
              <option key={k} value={k}>
                {KIND_LABEL[k]}
              </option>
            ))}
          </select>
        )}
      </Field>
      <Field label="Description (optional)" error={fields.description}>
        {({ id, describedBy, invalid }) => (
          <textarea
            id={id}
            name="description"
            rows={3}
            maxLength={2000}
            aria-describedby={describedBy}
            aria-invalid={invalid || undefined}
            className={inputClass(invalid)}
            placeholder="What the campaign is for, the laser set-up, anything the team should know."
          />
        )}
      </Field>
      <div className="flex items-center gap-3">
        <Button type="submit" isLoading={pending}>
          Create the campaign
        </Button>
        <Button type="button" variant="ghost" onClick={() => router.back()}>
          Cancel
        </Button>
      </div>
    </form>
  );
}
