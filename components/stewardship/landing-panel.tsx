'use client';
// The campaign's public landing page (C10): whether it is published and where, and the switch for the team's PI
// and data stewards. Publishing shows the citation metadata to anyone with the address; the file list only once
// the embargo has ended. Results, images and maps are never public.
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { Badge, Button, ConfirmDialog, ErrorState, LoadingBlock, Panel } from '@/components/ui';
import { ApiError, apiFetch } from '@/lib/api/client';
import type { LandingState } from '@/lib/db/queries/landing';
import { formatDateTime } from '@/lib/format';

type LandingResponse = { landing: LandingState; can: { publish: boolean } };

export function LandingPanel({ campaignId, underEmbargo }: { campaignId: number; underEmbargo: boolean }) {
  const qc = useQueryClient();
  const key = ['campaign', campaignId, 'landing'];
  const q = useQuery({
    queryKey: key,
    queryFn: () => apiFetch<LandingResponse>(`/api/campaigns/${campaignId}/landing`),
  });
  const [asking, setAsking] = useState<null | boolean>(null);
  const change = useMutation({
    mutationFn: (published: boolean) =>
      apiFetch<LandingResponse>(`/api/campaigns/${campaignId}/landing`, { method: 'PUT', json: { published } }),
    onSuccess: (data) => {
      qc.setQueryData(key, data);
      setAsking(null);
    },
  });
  if (q.isPending) return <LoadingBlock lines={3} />;
  if (q.isError) return <ErrorState message={q.error.message} onRetry={() => q.refetch()} />;
  const { landing, can } = q.data;
  return (
    <Panel title="Public page" data-testid="landing-panel">
      {landing.published && landing.path ? (
        <div className="space-y-2 text-small">
          <p>
            <Badge tone="good">published</Badge>{' '}
            <a className="font-medium text-lobe-700 hover:underline" href={landing.path} data-testid="landing-link">
              {landing.path}
            </a>
          </p>
          <p className="text-ink-600">
            Anyone with this address sees the citation metadata{underEmbargo ? '' : ' and the file list'}, without
            signing in. {underEmbargo ? 'The file list appears when the embargo ends. ' : ''}Results, images and maps
            are never shown there.
          </p>
          {landing.publishedAt ? (
            <p className="text-micro text-ink-500">Published {formatDateTime(landing.publishedAt)}.</p>
          ) : null}
        </div>
      ) : (
        <p className="text-small text-ink-600">
          Not public. Nobody outside Lobeline can see this campaign.
          {landing.path ? ' The page was withdrawn; publishing again keeps its old address.' : ''}
        </p>
      )}
      {can.publish ? (
        <div className="mt-3">
          <Button
            size="sm"
            variant={landing.published ? 'secondary' : 'primary'}
            onClick={() => {
              change.reset();
              setAsking(!landing.published);
            }}
          >
            {landing.published ? 'Withdraw the public page' : 'Publish a public page'}
          </Button>
        </div>
      ) : null}
      {asking !== null ? (
        <ConfirmDialog
          title={asking ? 'Publish a public page for this campaign?' : 'Withdraw the public page?'}
          confirmLabel={asking ? 'Publish' : 'Withdraw'}
          tone="primary"
          busy={change.isPending}
          onConfirm={() => change.mutate(asking)}
          onCancel={() => setAsking(null)}
        >
          <div className="space-y-2 text-small text-ink-700">
            {asking ? (
              <p>
                Anyone with the address will see the title, creators, affiliations, funding, licence, description,
                keywords and related identifiers
                {underEmbargo
                  ? '. The file list stays hidden until the embargo ends'
                  : ', and the list of files with their sizes and checksums'}
                . Results, images and maps are never shown. You can withdraw the page at any time, but copies others
                made while it was public cannot be called back.
              </p>
            ) : (
              <p>
                The address will answer “not found” from now on. It is kept, so publishing again gives the same address.
              </p>
            )}
            {change.error ? (
              <div role="alert" className="text-fault-600">
                <p>{change.error.message}</p>
                {change.error instanceof ApiError && change.error.details.length ? (
                  <ul className="list-disc pl-5">
                    {change.error.details.map((d) => (
                      <li key={d}>{d}</li>
                    ))}
                  </ul>
                ) : null}
              </div>
            ) : null}
          </div>
        </ConfirmDialog>
      ) : null}
    </Panel>
  );
}
