'use client';
// "Reduce with …": pick any calibration and settings version of the campaign and queue the scan again.
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { Button } from '@/components/ui';
import { inputClass } from '@/components/ui/input-class';
import { apiFetch } from '@/lib/api/client';
import type { VersionDto } from '@/lib/db/queries/calibrations';

export function ReduceAgain({ scanId, campaignId }: { scanId: number; campaignId: number }) {
  const qc = useQueryClient();
  const [cal, setCal] = useState<string>('');
  const [set, setSet] = useState<string>('');
  const cals = useQuery({
    queryKey: ['versions', campaignId, 'calibration'],
    queryFn: () => apiFetch<{ versions: VersionDto[] }>(`/api/campaigns/${campaignId}/calibrations`),
  });
  const sets = useQuery({
    queryKey: ['versions', campaignId, 'settings'],
    queryFn: () => apiFetch<{ versions: VersionDto[] }>(`/api/campaigns/${campaignId}/settings`),
  });
  const m = useMutation({
    mutationFn: () =>
      apiFetch(`/api/scans/${scanId}/reduce`, {
        method: 'POST',
        json: { calibrationId: cal ? Number(cal) : undefined, settingsId: set ? Number(set) : undefined },
      }),
    onSuccess: () => qc.invalidateQueries({ queryKey: ['scan', scanId] }),
  });
  const label = (v: VersionDto) =>
    `v${v.version} · ${v.isCurrent ? 'current' : v.status}${v.note ? ` · ${v.note.slice(0, 30)}` : ''}`;
  return (
    <div className="flex flex-wrap items-end gap-2" data-testid="reduce-again">
      <label className="text-micro text-ink-600">
        Calibration
        <select
          className={`${inputClass(false)} mt-1 h-8 py-0 text-small`}
          value={cal}
          onChange={(e) => setCal(e.target.value)}
        >
          <option value="">current approved</option>
          {cals.data?.versions.map((v) => (
            <option key={v.id} value={v.id}>
              {label(v)}
            </option>
          ))}
        </select>
      </label>
      <label className="text-micro text-ink-600">
        Settings
        <select
          className={`${inputClass(false)} mt-1 h-8 py-0 text-small`}
          value={set}
          onChange={(e) => setSet(e.target.value)}
        >
          <option value="">current approved</option>
          {sets.data?.versions.map((v) => (
            <option key={v.id} value={v.id}>
              {label(v)}
            </option>
          ))}
        </select>
      </label>
      <Button size="sm" variant="secondary" onClick={() => m.mutate()} disabled={m.isPending}>
        {m.isPending ? 'Queueing…' : 'Reduce with these versions'}
      </Button>
      {m.isError ? (
        <p className="w-full text-small text-fault-700" role="status">
          {m.error.message}
        </p>
      ) : null}
      {m.isSuccess ? (
        <p className="w-full text-small text-lobe-700" role="status">
          Queued. The page updates when the worker is done.
        </p>
      ) : null}
    </div>
  );
}
