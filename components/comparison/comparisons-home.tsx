'use client';
// The comparisons section (issue 13): the saved comparisons of the viewer's teams above a fresh workbench, and one
// saved comparison opened from its address.
import { useQuery } from '@tanstack/react-query';
import Link from 'next/link';
import { EmptyState, ErrorState, LoadingBlock, Panel } from '@/components/ui';
import { apiFetch } from '@/lib/api/client';
import type { ComparisonSpec } from '@/lib/comparison/spec';
import { formatDateTime } from '@/lib/format';
import { ComparisonWorkbench, type SavedView } from './comparison-workbench';

type SaveTeams = { teamId: number; teamName: string }[];

interface SavedRow {
  id: string;
  title: string;
  teamName: string;
  createdBy: { name: string } | null;
  updatedAt: string | null;
}

export function ComparisonsHome({ saveTeams }: { saveTeams: SaveTeams }) {
  const q = useQuery({
    queryKey: ['comparison', 'saved'],
    queryFn: () => apiFetch<{ comparisons: SavedRow[] }>('/api/comparisons'),
  });
  return (
    <div className="space-y-6">
      <ComparisonWorkbench saveTeams={saveTeams} />
      <Panel title="Kept comparisons" description="Saved by a PI for the members of a team." data-testid="saved-list">
        {q.isPending ? (
          <LoadingBlock lines={2} />
        ) : q.isError ? (
          <ErrorState message={q.error.message} onRetry={() => q.refetch()} />
        ) : !q.data.comparisons.length ? (
          <EmptyState title="None kept yet">A PI keeps a comparison with the form above the list.</EmptyState>
        ) : (
          <ul className="divide-y divide-ink-100">
            {q.data.comparisons.map((c) => (
              <li key={c.id} className="flex flex-wrap items-baseline justify-between gap-2 py-2">
                <Link href={`/comparisons/${c.id}`} className="font-medium text-lobe-700 hover:underline">
                  {c.title}
                </Link>
                <span className="text-micro text-ink-500">
                  {c.teamName} · {c.createdBy?.name ?? 'a former member'}
                  {c.updatedAt ? ` · ${formatDateTime(c.updatedAt)}` : ''}
                </span>
              </li>
            ))}
          </ul>
        )}
      </Panel>
    </div>
  );
}

interface SavedAnswer {
  comparison: SavedView & { spec: ComparisonSpec };
  visible: { campaignIds: number[]; scanIds: number[] };
  hidden: { campaignIds: number[]; scanIds: number[] };
  canDelete: boolean;
}

export function SavedComparisonView({ id, saveTeams }: { id: string; saveTeams: SaveTeams }) {
  const q = useQuery({
    queryKey: ['comparison', 'saved', id],
    queryFn: () => apiFetch<SavedAnswer>(`/api/comparisons/${id}`),
  });
  if (q.isPending) return <LoadingBlock lines={10} />;
  if (q.isError) return <ErrorState message={q.error.message} onRetry={() => q.refetch()} />;
  const { comparison, visible, hidden, canDelete } = q.data;
  // draw only what this viewer may read; the rest is named as hidden
  const spec: ComparisonSpec = { ...comparison.spec, selection: visible };
  return (
    <ComparisonWorkbench
      key={comparison.id}
      initialSpec={spec}
      saved={{ ...comparison, hidden, canDelete }}
      saveTeams={saveTeams}
    />
  );
}
