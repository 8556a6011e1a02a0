'use client';

import { useState } from 'react';
import { Badge, Button, Panel } from '@/components/ui';
import { ApiError, apiFetch } from '@/lib/api/client';
import type { Receipt } from '@/lib/ingest/receipt';
import { formatBytes, formatTime } from './format';

export function ReceiptView({ receipt, mailedAt }: { receipt: Receipt; mailedAt: string | null }) {
  return (
    <div className="space-y-3" data-testid="receipt">
      <p className="text-small text-ink-700">
        Closed {formatTime(receipt.closedAt)}
        {receipt.closedBy ? ` by ${receipt.closedBy}` : ''}.{' '}
        {mailedAt
          ? `Receipt e-mailed ${formatTime(mailedAt)} to the operator and the team's analysts.`
          : 'The receipt e-mail has not been sent yet.'}
      </p>
      <p className="text-small text-ink-700">
        {receipt.totals.files} files, {formatBytes(receipt.totals.bytes)} — {receipt.totals.accepted} accepted,{' '}
        <span className="text-fault-700">{receipt.totals.quarantined} quarantined</span>, {receipt.totals.duplicates}{' '}
        linked duplicates.
      </p>
      <table className="w-full text-left text-small">
        <thead className="text-micro text-ink-500">
          <tr>
            <th className="py-1 pr-3">File</th>
            <th className="pr-3">Size</th>
            <th className="pr-3">SHA-256</th>
            <th>Verdict</th>
          </tr>
        </thead>
        <tbody className="divide-y divide-ink-100">
          {receipt.lines.map((l) => (
            <tr key={l.scanId} className="align-top">
              <td className="py-1.5 pr-3">
                <a className="text-lobe-700 hover:underline" href={`/scans/${l.scanId}`}>
                  {l.fileName}
                </a>
              </td>
              <td className="pr-3 whitespace-nowrap">{formatBytes(l.sizeBytes)}</td>
              <td className="max-w-64 pr-3 font-mono text-micro break-all text-ink-500">{l.sha256}</td>
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
