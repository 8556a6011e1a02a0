'use client';

import { useRef, useState } from 'react';
import { Badge, Button, EmptyState, Field, inputClass, Panel } from '@/components/ui';
import { ApiError, apiFetch } from '@/lib/api/client';
import type { ShiftFileDto, VerifyingUploadDto } from '@/lib/ingest/types';
import { formatBytes, KIND_WORDS } from './format';
import { fieldLabel, fieldsNamedBy, parseReleaseForm, RELEASE_FIELDS, type ReleaseFormValues } from './release-fields';

const STATUS: Record<ShiftFileDto['rawStatus'], { tone: 'good' | 'bad' | 'info' | 'neutral'; word: string }> = {
  accepted: { tone: 'good', word: 'Accepted' },
  quarantined: { tone: 'bad', word: 'Quarantined' },
  released: { tone: 'info', word: 'Released' },
  replaced: { tone: 'neutral', word: 'Replaced' },
};

/** Suggested values for the fields the reasons name (the campaign's own target and wavelength). */
export interface ReleaseSuggestion {
  target?: string | null;
  wavelengthNm?: number | null;
}

function ReleaseForm({
  file,
  suggest,
  onDone,
}: {
  file: ShiftFileDto;
  suggest?: ReleaseSuggestion;
  onDone: () => void;
}) {
  const named = fieldsNamedBy(file.reasons);
  const [mode, setMode] = useState<'revalidate' | 'accept'>('revalidate');
  const [values, setValues] = useState<ReleaseFormValues>(() => {
    const v: ReleaseFormValues = {};
    if (named.includes('wavelengthNm') && suggest?.wavelengthNm) v.wavelengthNm = String(suggest.wavelengthNm);
    if (named.includes('target') && suggest?.target) v.target = suggest.target;
    return v;
  });
  const [showAll, setShowAll] = useState(named.length === 0);
  const [fieldErrors, setFieldErrors] = useState<Record<string, string>>({});
  const [reason, setReason] = useState('');
  const [error, setError] = useState<{ message: string; details: string[] } | null>(null);
  const [busy, setBusy] = useState(false);
  const shown = RELEASE_FIELDS.filter((f) => showAll || named.includes(f.key));
  const submit = async () => {
    setError(null);
    setFieldErrors({});
    let body: unknown;
    if (mode === 'revalidate') {
      const check = parseReleaseForm(values);
      if (!check.ok) {
        const byKey: Record<string, string> = {};
        const general: string[] = [];
        for (const p of check.problems) {
          if (p.key && !byKey[p.key]) byKey[p.key] = p.message;
          else general.push(p.message);
        }
        setFieldErrors(byKey);
        setError({ message: general[0] ?? 'Some corrected values need another look.', details: general.slice(1) });
        return;
      }
      body = { mode, metadataOverride: check.override };
    } else body = { mode, reason };
    setBusy(true);
    try {
      await apiFetch(`/api/raw-files/${file.rawFileId}/release`, { method: 'POST', json: body });
      onDone();
    } catch (err) {
      setError(
        err instanceof ApiError
          ? { message: err.message, details: err.details }
          : { message: String(err), details: [] },
      );
    } finally {
      setBusy(false);
    }
  };
  return (
    <div className="mt-3 space-y-3 rounded-md bg-ink-50 p-3 ring-1 ring-ink-200" data-testid="release-form">
      <fieldset className="flex flex-wrap gap-4 text-small">
        <legend className="sr-only">How to release</legend>
        <label className="flex items-center gap-2">
          <input
            type="radio"
            checked={mode === 'revalidate'}
            onChange={() => setMode('revalidate')}
            className="accent-lobe-600"
          />
          Correct the metadata and check again
        </label>
        <label className="flex items-center gap-2">
          <input
            type="radio"
            checked={mode === 'accept'}
            onChange={() => setMode('accept')}
            className="accent-lobe-600"
          />
          Accept as it is, with a reason
        </label>
      </fieldset>
      {mode === 'revalidate' ? (
        <div className="space-y-3">
          <div className="grid gap-3 sm:grid-cols-2">
            {shown.map((f) => (
              <Field
                key={f.key}
                label={fieldLabel(f)}
                hint={named.includes(f.key) ? `Named in the reason above${f.hint ? `; ${f.hint}` : ''}.` : f.hint}
                error={fieldErrors[f.key] ?? null}
              >
                {({ id, describedBy, invalid }) =>
                  f.input === 'select' ? (
                    <select
                      id={id}
                      aria-describedby={describedBy}
                      aria-invalid={invalid || undefined}
                      data-field={f.key}
                      value={values[f.key] ?? ''}
                      onChange={(e) => setValues((v) => ({ ...v, [f.key]: e.target.value }))}
                      className={inputClass(invalid)}
                    >
                      <option value="">leave as stored</option>
                      {f.options?.map((o) => (
                        <option key={o.value} value={o.value}>
                          {o.label}
                        </option>
                      ))}
                    </select>
                  ) : (
                    <input
                      id={id}
                      aria-describedby={describedBy}
                      aria-invalid={invalid || undefined}
                      data-field={f.key}
                      inputMode={f.input === 'number' ? 'decimal' : undefined}
                      placeholder="leave as stored"
                      value={values[f.key] ?? ''}
                      onChange={(e) => setValues((v) => ({ ...v, [f.key]: e.target.value }))}
                      className={inputClass(invalid)}
                    />
                  )
                }
              </Field>
            ))}
          </div>
          {named.length > 0 ? (
            <button
              type="button"
              className="text-small text-lobe-700 hover:underline"
              onClick={() => setShowAll((s) => !s)}
            >
              {showAll ? 'Show only the values the reason names' : 'Correct other values too'}
            </button>
          ) : null}
          <p className="text-micro text-ink-500">
            Empty fields keep the stored value. The stored file is not changed; the correction is recorded with it and
            applied to every reduction of this file.
          </p>
        </div>
      ) : (
        <div className="space-y-1">
          <label className="block text-small font-medium text-ink-800" htmlFor={`rs-${file.rawFileId}`}>
            Why the file is fit for use
          </label>
          <textarea
            id={`rs-${file.rawFileId}`}
            rows={3}
            value={reason}
            onChange={(e) => setReason(e.target.value)}
            className={inputClass(false)}
          />
        </div>
      )}
      {error ? (
        <div className="text-small text-fault-700" role="status" data-testid="release-error">
          <p>{error.message}</p>
          {error.details.length ? (
            <ul className="list-disc pl-5 text-micro">
              {error.details.map((d) => (
                <li key={d}>{d}</li>
              ))}
            </ul>
          ) : null}
        </div>
      ) : null}
      <Button size="sm" onClick={submit} isLoading={busy}>
        Release the file
      </Button>
    </div>
  );
}

export function StoredFiles({
  files,
  verifying,
  canRelease,
  canUpload,
  onChanged,
  onReplace,
  suggest,
}: {
  suggest?: ReleaseSuggestion;
  files: ShiftFileDto[];
  verifying: VerifyingUploadDto[];
  canRelease: boolean;
  canUpload: boolean;
  onChanged: () => void;
  onReplace: (file: File, rawFileId: number) => void;
}) {
  const [open, setOpen] = useState<number | null>(null);
  const picker = useRef<HTMLInputElement>(null);
  const replacing = useRef<number | null>(null);
  const quarantined = files.filter((f) => f.rawStatus === 'quarantined').length;
  return (
    <Panel
      title="Stored in this shift"
      description={
        files.length
          ? `${files.length} file${files.length === 1 ? '' : 's'}${quarantined ? `, ${quarantined} quarantined` : ''}. Quarantined files are kept byte for byte.`
          : undefined
      }
      data-testid="stored-files"
      flush
    >
      <input
        ref={picker}
        type="file"
        className="hidden"
        accept=".h5,.hdf5,.nxs"
        onChange={(e) => {
          const f = e.target.files?.[0];
          if (f && replacing.current) onReplace(f, replacing.current);
          e.target.value = '';
        }}
      />
      {verifying.length ? (
        <ul
          className="border-b border-ink-100 bg-ink-50 px-5 py-3 text-small text-ink-700"
          data-testid="verifying-files"
        >
          {verifying.map((v) => (
            <li key={v.uploadId}>
              {v.fileName} · {formatBytes(v.sizeBytes)} · arrived; storage is checking its size, SHA-256 and every
              frame. It is listed below when the check is done.
            </li>
          ))}
        </ul>
      ) : null}
      {files.length === 0 ? (
        <div className="p-5">
          <EmptyState title="No files stored yet">Files appear here once storage has verified them.</EmptyState>
        </div>
      ) : (
        <ul className="divide-y divide-ink-100">
          {files.map((f) => (
            <li
              key={f.scanId}
              className="px-5 py-3"
              data-testid="stored-file"
              data-file={f.fileName}
              data-status={f.rawStatus}
            >
              <div className="flex flex-wrap items-center gap-2">
                <a href={`/scans/${f.scanId}`} className="font-medium text-lobe-700 hover:underline">
                  {f.fileName}
                </a>
                <Badge tone={STATUS[f.rawStatus].tone}>{STATUS[f.rawStatus].word}</Badge>
                {f.duplicateLinked ? <Badge tone="info">linked duplicate</Badge> : null}
                {f.replacesRawFileId ? <Badge tone="neutral">replaces file {f.replacesRawFileId}</Badge> : null}
                <span className="text-small text-ink-500">
                  {formatBytes(f.sizeBytes)} · scan {f.scanId} · {f.scanStatus}
                </span>
                <span className="ml-auto flex gap-2">
                  {f.rawStatus === 'quarantined' && canRelease ? (
                    <Button
                      size="sm"
                      variant="secondary"
                      onClick={() => setOpen(open === f.rawFileId ? null : f.rawFileId)}
                    >
                      Release…
                    </Button>
                  ) : null}
                  {f.rawStatus === 'quarantined' && canUpload ? (
                    <Button
                      size="sm"
                      variant="ghost"
                      onClick={() => {
                        replacing.current = f.rawFileId;
                        picker.current?.click();
                      }}
                    >
                      Replace with a corrected file
                    </Button>
                  ) : null}
                </span>
              </div>
              <p className="mt-0.5 text-small text-ink-600">
                {f.summary.experimentKind
                  ? `${KIND_WORDS[f.summary.experimentKind] ?? f.summary.experimentKind} · ${f.summary.target} · ${f.summary.wavelengthNm} nm · ${f.summary.nSteps} steps${f.summary.nX && f.summary.nY ? ` · ${f.summary.nX}×${f.summary.nY} px` : ' · event list'}`
                  : 'metadata not catalogued (see the reasons below)'}
                {f.uploadedBy ? ` · sent by ${f.uploadedBy}` : ''}
              </p>
              <p className="font-mono text-micro break-all text-ink-400">SHA-256 {f.sha256}</p>
              {f.warnings.map((w) => (
                <p key={w} className="text-micro text-flare-900" data-testid="stored-warning">
                  {w}
                </p>
              ))}
              {f.reasons.length && f.rawStatus !== 'accepted' ? (
                <ul
                  className={`mt-1 list-disc pl-5 font-mono text-micro ${f.rawStatus === 'quarantined' ? 'text-fault-700' : 'text-ink-500 line-through'}`}
                  data-testid="quarantine-reasons"
                >
                  {f.reasons.map((r) => (
                    <li key={r}>{r}</li>
                  ))}
                </ul>
              ) : null}
              {f.releaseNote ? <p className="mt-1 text-small text-ink-600">Released: {f.releaseNote}</p> : null}
              {open === f.rawFileId ? (
                <ReleaseForm
                  file={f}
                  suggest={suggest}
                  onDone={() => {
                    setOpen(null);
                    onChanged();
                  }}
                />
              ) : null}
            </li>
          ))}
        </ul>
      )}
    </Panel>
  );
}
