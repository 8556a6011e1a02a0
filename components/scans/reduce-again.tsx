'use client';
// "Reduce with …": pick any calibration and settings version of the campaign and queue the scan again.
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { Button } from '@/components/ui';
import { inputClass } from '@/components/ui/input-class';
import { apiFetch } from '@/lib/api/client';
import type { VersionDto } from '@/lib/db/queries/calibrations';
import type { JobDto } from '@/lib/db/queries/scans';

/** What became of the job this form queued, from the scan's job list (which the scan page keeps fresh). */
function jobLine(job: JobDto | undefined): { text: string; tone: string } {
  if (!job || job.status === 'queued') return { text: 'Queued: waiting for a worker.', tone: 'text-lobe-700' };
  if (job.status === 'running') return { text: 'A worker is reducing it now.', tone: 'text-lobe-700' };
  if (job.status === 'failed') {
    return { text: 'The reduction failed; the reason is in the reduction history below.', tone: 'text-fault-700' };
  }
  return { text: 'Done: the new result is the one shown above.', tone: 'text-ink-700' };
}

export function ReduceAgain({ scanId, campaignId, jobs }: { scanId: number; campaignId: number; jobs: JobDto[] }) {
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
      apiFetch<{ reductionJobId: number }>(`/api/scans/${scanId}/reduce`, {
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
        <p
          className={`w-full text-small ${jobLine(jobs.find((j) => j.id === m.data.reductionJobId)).tone}`}
          role="status"
          data-testid="reduce-again-status"
        >
          {jobLine(jobs.find((j) => j.id === m.data.reductionJobId)).text}
        </p>
      ) : null}
    </div>
  );
}
