'use client';

import { useState } from 'react';
import { Button, Field, inputClass, Panel } from '@/components/ui';
import { ApiError, apiFetch } from '@/lib/api/client';
import { formatDateTime } from '@/lib/format';
import type { LogEntryDto } from '@/lib/ingest/types';

const NUMBERS = [
  ['wavelengthNm', 'Wavelength (nm)'],
  ['pulseEnergyUj', 'Pulse energy (µJ)'],
  ['ellipticity', 'Ellipticity setting (0–1)'],
] as const;
const VOLTS = [
  ['mcpFrontV', 'MCP front (V)'],
  ['mcpBackV', 'MCP back (V)'],
  ['phosphorV', 'Phosphor (V)'],
  ['repellerV', 'Repeller (V)'],
] as const;

function num(v: string): number | undefined {
  return v.trim() === '' ? undefined : Number(v);
}

export function ShiftLogPanel({
  shiftId,
  entries,
  canLog,
  onAdded,
  campaignTarget,
}: {
  shiftId: number;
  entries: LogEntryDto[];
  canLog: boolean;
  onAdded: () => void;
  /** The campaign's target, shown as the example in the target field. */
  campaignTarget?: string | null;
}) {
  const [form, setForm] = useState<Record<string, string>>({});
  const [errors, setErrors] = useState<Record<string, string>>({});
  const [message, setMessage] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  const set = (k: string) => (e: { target: { value: string } }) => setForm((f) => ({ ...f, [k]: e.target.value }));
  const submit = async (e: React.FormEvent) => {
    e.preventDefault();
    setBusy(true);
    setErrors({});
    setMessage(null);
    const voltages = Object.fromEntries(VOLTS.map(([k]) => [k, num(form[k] ?? '')]).filter(([, v]) => v !== undefined));
    const body = {
      text: form.text ?? '',
      ...(form.target?.trim() ? { target: form.target.trim() } : {}),
      ...Object.fromEntries(NUMBERS.map(([k]) => [k, num(form[k] ?? '')]).filter(([, v]) => v !== undefined)),
      ...(Object.keys(voltages).length ? { detectorVoltages: voltages } : {}),
    };
    try {
      await apiFetch(`/api/shifts/${shiftId}/log`, { method: 'POST', json: body });
      setForm({});
      onAdded();
    } catch (err) {
      if (err instanceof ApiError) {
        const byField: Record<string, string> = {};
        for (const d of err.details) {
          const [field, ...rest] = d.split(': ');
          if (field && rest.length) byField[field.replace('detectorVoltages.', '')] = rest.join(': ');
        }
        setErrors(byField);
        setMessage(err.message);
      } else setMessage(String(err));
    } finally {
      setBusy(false);
    }
  };
  return (
    <Panel
      title="Shift log"
      description="Timestamped notes; the structured values are compared with each dropped file before it is sent."
      data-testid="shift-log"
    >
      {entries.length ? (
        <ol className="mb-4 space-y-3">
          {entries.map((e) => (
            <li key={e.id} className="border-l-2 border-lobe-300 pl-3 text-small" data-testid="log-entry">
              <p className="text-micro text-ink-500">
                {formatDateTime(e.notedAt)}
                {e.author ? ` · ${e.author}` : ''}
              </p>
              <p className="whitespace-pre-wrap text-ink-800">{e.text}</p>
              <p className="text-micro text-ink-600">
                {[
                  e.target && `target ${e.target}`,
                  e.wavelengthNm !== null && `${e.wavelengthNm} nm`,
                  e.pulseEnergyUj !== null && `${e.pulseEnergyUj} µJ`,
                  e.ellipticity !== null && `ε ${e.ellipticity}`,
                  e.detectorVoltages &&
                    Object.entries(e.detectorVoltages)
                      .map(([k, v]) => `${k.replace(/V$/, '').replace('mcp', 'MCP ').toLowerCase()} ${v} V`)
                      .join(', '),
                ]
                  .filter(Boolean)
                  .join(' · ')}
              </p>
            </li>
          ))}
        </ol>
      ) : (
        <p className="mb-4 text-small text-ink-500">No notes yet.</p>
      )}
      {canLog ? (
        <form onSubmit={submit} className="space-y-3" noValidate>
          <Field label="Note" error={errors.text}>
            {({ id, describedBy, invalid }) => (
              <textarea
                id={id}
                aria-describedby={describedBy}
                aria-invalid={invalid || undefined}
                rows={2}
                value={form.text ?? ''}
                onChange={set('text')}
                className={inputClass(invalid)}
                required
              />
            )}
          </Field>
          <div className="grid grid-cols-2 gap-3">
            <Field
              label="Target"
              value={form.target ?? ''}
              onChange={set('target')}
              error={errors.target}
              placeholder={campaignTarget ?? undefined}
            />
            {NUMBERS.map(([k, label]) => (
              <Field
                key={k}
                label={label}
                inputMode="decimal"
                value={form[k] ?? ''}
                onChange={set(k)}
                error={errors[k]}
              />
            ))}
          </div>
          <fieldset>
            <legend className="mb-1 text-small font-medium text-ink-800">Detector voltages</legend>
            <div className="grid grid-cols-2 gap-3">
              {VOLTS.map(([k, label]) => (
                <Field
                  key={k}
                  label={label}
                  inputMode="decimal"
                  value={form[k] ?? ''}
                  onChange={set(k)}
                  error={errors[k]}
                />
              ))}
            </div>
          </fieldset>
          {message ? (
            <p className="text-small text-fault-700" role="status">
              {message}
            </p>
          ) : null}
          <Button type="submit" size="sm" isLoading={busy}>
            Add to the log
          </Button>
        </form>
      ) : null}
    </Panel>
  );
}
