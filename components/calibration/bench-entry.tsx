'use client';
// The way from the campaign's calibration page to the calibration bench (C7): choose the scan to calibrate on —
// usually the campaign's reference scan (a round ATI ring or a linear-polarization image) — and open it.
import { useQuery } from '@tanstack/react-query';
import { useState } from 'react';
import type { ScanPage } from '@/components/campaign/types';
import { LinkButton } from '@/components/ui';
import { compactInputClass } from '@/components/ui/input-class';
import { apiFetch } from '@/lib/api/client';

export function BenchEntry({ campaignId }: { campaignId: number }) {
  const q = useQuery({
    queryKey: ['bench-entry-scans', campaignId],
    queryFn: () => apiFetch<ScanPage>(`/api/campaigns/${campaignId}/scans?pageSize=200&sort=id&dir=asc`),
  });
  const scans = (q.data?.rows ?? []).filter((s) => s.status !== 'quarantined');
  const [chosen, setChosen] = useState<number | null>(null);
  const id = chosen ?? scans[0]?.id ?? null;
  if (q.isPending) return null;
  if (!scans.length) {
    return <p className="text-small text-ink-600">The bench opens a scan of the campaign; there is none yet.</p>;
  }
  return (
    <div className="flex flex-wrap items-center gap-2" data-testid="bench-entry">
      <label className="text-small text-ink-700" htmlFor="bench-scan">
        Reference scan
      </label>
      <select
        id="bench-scan"
        className={compactInputClass('max-w-xs')}
        value={id ?? ''}
        onChange={(e) => setChosen(Number(e.target.value))}
      >
        {scans.map((s) => (
          <option key={s.id} value={s.id}>
            {s.title || s.fileName || `Scan ${s.id}`}
          </option>
        ))}
      </select>
      {id !== null ? (
        <LinkButton size="sm" variant="secondary" href={`/scans/${id}/bench`} data-testid="bench-entry-open">
          Open on the calibration bench
        </LinkButton>
      ) : null}
    </div>
  );
}
