'use client';

import { useState } from 'react';
import { Badge, Button, Panel } from '@/components/ui';
import { ApiError, apiFetch } from '@/lib/api/client';
import { formatBytes, formatDateTime } from '@/lib/format';
import type { Receipt } from '@/lib/ingest/receipt';

/** First 12 and last 4 hex digits; the full value is in the tooltip and goes to the clipboard with one click. */
function ShortHash({ value }: { value: string }) {
  const [copied, setCopied] = useState(false);
  return (
    <span className="inline-flex items-center gap-1.5 whitespace-nowrap" data-sha256={value}>
      <span className="font-mono text-micro text-ink-600" title={value}>
        {value.slice(0, 12)}…{value.slice(-4)}
      </span>
      <button
        type="button"
        className="rounded px-1 text-micro text-lobe-700 ring-1 ring-ink-200 hover:bg-ink-50"
        aria-label={`Copy the full SHA-256 ${value}`}
        onClick={() => {
          void navigator.clipboard?.writeText(value).then(() => {
            setCopied(true);
            setTimeout(() => setCopied(false), 1500);
          });
        }}
      >
        {copied ? 'copied' : 'copy'}
      </button>
    </span>
  );
}

export function ReceiptView({ receipt, mailedAt }: { receipt: Receipt; mailedAt: string | null }) {
  return (
    <div className="space-y-3" data-testid="receipt">
      <p className="text-small text-ink-700">
        Closed {formatDateTime(receipt.closedAt)}
        {receipt.closedBy ? ` by ${receipt.closedBy}` : ''}.{' '}
        {mailedAt
          ? `Receipt e-mailed ${formatDateTime(mailedAt)} to the operator and the team's analysts.`
          : 'No receipt e-mail is on record for this shift; this page is its receipt.'}
      </p>
      <p className="text-small text-ink-700">
        {receipt.totals.files} files, {formatBytes(receipt.totals.bytes)} — {receipt.totals.accepted} accepted,{' '}
        <span className="text-fault-700">{receipt.totals.quarantined} quarantined</span>, {receipt.totals.duplicates}{' '}
        linked duplicates.
      </p>
      <table className="w-full table-fixed text-left text-small">
        <thead className="text-micro text-ink-500">
          <tr>
            <th className="py-1 pr-3">File</th>
            <th className="w-24 pr-3">Size</th>
            <th className="w-52 pr-3">SHA-256</th>
            <th className="w-[40%]">Verdict</th>
          </tr>
        </thead>
        <tbody className="divide-y divide-ink-100">
          {receipt.lines.map((l) => (
            <tr key={l.scanId} className="align-top">
              <td className="py-1.5 pr-3">
                <a
                  className="block truncate whitespace-nowrap text-lobe-700 hover:underline"
                  href={`/scans/${l.scanId}`}
                  title={l.fileName}
                >
                  {l.fileName}
                </a>
              </td>
              <td className="py-1.5 pr-3 whitespace-nowrap">{formatBytes(l.sizeBytes)}</td>
              <td className="py-1.5 pr-3">
                <ShortHash value={l.sha256} />
              </td>
              <td>
                <Badge tone={l.verdict === 'quarantined' ? 'bad' : l.verdict === 'replaced' ? 'neutral' : 'good'}>
                  {l.verdict}
                </Badge>
                {l.duplicateLinked ? <span className="ml-1 text-micro text-ink-500">linked</span> : null}
                {l.reasons.length ? (
                  <ul className="mt-1 list-disc pl-4 font-mono text-micro text-fault-700">
                    {l.reasons.map((r) => (
                      <li key={r}>{r}</li>
                    ))}
                  </ul>
                ) : null}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
      {receipt.abandoned.length ? (
        <p className="text-small text-flare-800">
          Not stored (abandoned at closing): {receipt.abandoned.map((a) => a.fileName).join(', ')}
        </p>
      ) : null}
    </div>
  );
}

export function CloseShiftPanel({
  shiftId,
  canClose,
  busyUploads,
  onClosed,
}: {
  shiftId: number;
  canClose: boolean;
  busyUploads: number;
  onClosed: () => void;
}) {
  const [confirming, setConfirming] = useState(false);
  const [problem, setProblem] = useState<{ message: string; details: string[]; unfinished: boolean } | null>(null);
  const [busy, setBusy] = useState(false);
  const close = async (abandonUnfinished: boolean) => {
    setBusy(true);
    setProblem(null);
    try {
      await apiFetch(`/api/shifts/${shiftId}/close`, { method: 'POST', json: { abandonUnfinished } });
      setConfirming(false);
      onClosed();
    } catch (err) {
      const e = err instanceof ApiError ? err : new ApiError('internal:api', String(err), 500);
      setProblem({
        message: e.message,
        details: e.details,
        unfinished: e.status === 409 && e.details.some((d) => d.endsWith('not finished')),
      });
    } finally {
      setBusy(false);
    }
  };
  if (!canClose) return null;
  return (
    <Panel
      title="End of shift"
      description="Closing stops uploads to this shift and e-mails a receipt of every file to you and the team's analysts."
      data-testid="close-shift"
    >
      {busyUploads ? (
        <p className="mb-3 text-small text-flare-800">
          {busyUploads} file{busyUploads === 1 ? ' is' : 's are'} still being sent from this page.
        </p>
      ) : null}
      {confirming ? (
        <div className="space-y-3">
          <p className="text-small text-ink-700">
            Close this shift now? No more files or notes can be added afterwards.
          </p>
          <div className="flex gap-2">
            <Button variant="danger" onClick={() => close(false)} isLoading={busy} data-testid="confirm-close">
              Close the shift
            </Button>
            <Button variant="secondary" onClick={() => setConfirming(false)}>
              Keep it open
            </Button>
          </div>
        </div>
      ) : (
        <Button onClick={() => setConfirming(true)} disabled={busyUploads > 0} data-testid="close-shift-button">
          Close the shift…
        </Button>
      )}
      {problem ? (
        <div className="mt-3 space-y-2 text-small text-fault-700" role="status">
          <p>{problem.message}</p>
          <ul className="list-disc pl-5">
            {problem.details.map((d) => (
              <li key={d}>{d}</li>
            ))}
          </ul>
          {problem.unfinished ? (
            <Button size="sm" variant="danger" onClick={() => close(true)} isLoading={busy}>
              Close and abandon the unfinished uploads
            </Button>
          ) : null}
        </div>
      ) : null}
    </Panel>
  );
}
