'use client';

import { useQuery } from '@tanstack/react-query';
import { useState } from 'react';
import { cx } from '@/components/ui/cx';
import { EmptyState } from '@/components/ui/empty-state';
import { ErrorState } from '@/components/ui/error-state';
import { LoadingBlock } from '@/components/ui/loading-block';
import { Panel } from '@/components/ui/panel';
import { apiFetch } from '@/lib/api/client';
import { formatDateTime } from '@/lib/format';

interface Summary {
  id: string;
  date: string;
  from: string;
  to: string[];
  subject: string;
}
interface Message extends Summary {
  text: string;
  html: string;
}

/** Makes the links in a plain-text mail clickable, without interpreting anything else. */
function Linkified({ text }: { text: string }) {
  const parts = text.split(/(https?:\/\/[^\s<>"]+)/g);
  return (
    <pre className="font-sans text-small whitespace-pre-wrap text-ink-800" data-testid="mail-text">
      {parts.map((p, i) =>
        /^https?:\/\//.test(p) ? (
          // biome-ignore lint/suspicious/noArrayIndexKey: pieces of one immutable text
          <a key={i} href={p} className="break-all text-lobe-700 underline">
            {p}
          </a>
        ) : (
          p
        ),
      )}
    </pre>
  );
}

export function Mailbox() {
  const [openId, setOpenId] = useState<string | null>(null);
  const list = useQuery({
    queryKey: ['admin', 'mailbox'],
    queryFn: () => apiFetch<{ messages: Summary[] }>('/api/admin/mailbox'),
    refetchInterval: 5000,
  });
  const one = useQuery({
    queryKey: ['admin', 'mailbox', openId],
    queryFn: () => apiFetch<{ message: Message }>(`/api/admin/mailbox/${openId}`),
    enabled: openId !== null,
  });

  return (
    <div className="grid gap-6 lg:grid-cols-[24rem_minmax(0,1fr)]">
      <Panel title="Caught messages" flush>
        {list.isPending ? (
          <div className="px-5 py-4">
            <LoadingBlock />
          </div>
        ) : list.isError ? (
          <div className="px-5 py-4">
            <ErrorState message={list.error.message} onRetry={() => void list.refetch()} />
          </div>
        ) : list.data.messages.length === 0 ? (
          <div className="px-5 py-4">
            <EmptyState title="No mail yet">Invitations and reset links sent here appear within seconds.</EmptyState>
          </div>
        ) : (
          <ul className="divide-y divide-ink-100" data-testid="mail-list">
            {list.data.messages.map((m) => (
              <li key={m.id}>
                <button
                  type="button"
                  onClick={() => setOpenId(m.id)}
                  className={cx('block w-full px-5 py-2.5 text-left hover:bg-ink-50', openId === m.id && 'bg-lobe-50')}
                >
                  <span className="block truncate text-small font-medium text-ink-900">{m.subject}</span>
                  <span className="block truncate text-micro text-ink-500">
                    to {m.to.join(', ')} · {formatDateTime(m.date)}
                  </span>
                </button>
              </li>
            ))}
          </ul>
        )}
      </Panel>
      <Panel title={one.data?.message.subject ?? 'Message'}>
        {openId === null ? (
          <p className="text-small text-ink-500">Choose a message on the left.</p>
        ) : one.isPending ? (
          <LoadingBlock />
        ) : one.isError ? (
          <ErrorState message={one.error.message} />
        ) : (
          <div className="space-y-3">
            <dl className="grid grid-cols-[4rem_1fr] gap-y-1 text-small">
              <dt className="text-ink-500">From</dt>
              <dd className="text-ink-800">{one.data.message.from}</dd>
              <dt className="text-ink-500">To</dt>
              <dd className="text-ink-800">{one.data.message.to.join(', ')}</dd>
            </dl>
            <div className="border-t border-ink-100 pt-3">
              <Linkified text={one.data.message.text} />
            </div>
          </div>
        )}
      </Panel>
    </div>
  );
}
