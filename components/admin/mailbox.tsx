'use client';

import { useQuery } from '@tanstack/react-query';
import { useState } from 'react';
import { Badge } from '@/components/ui/badge';
import { EmptyState } from '@/components/ui/empty-state';
import { ErrorState } from '@/components/ui/error-state';
import { LoadingBlock } from '@/components/ui/loading-block';
import { Panel } from '@/components/ui/panel';
import { apiFetch } from '@/lib/api/client';
import { formatDateTime } from '@/lib/format';
import { NOTICE_KIND_WORDS, NOTICE_KINDS, type NoticeKind } from '@/lib/mail/notice-kinds';

interface Notice {
  id: string;
  date: string;
  from: string;
  to: string[];
  subject: string;
  kind: NoticeKind;
  facts: string[];
}
interface Message extends Omit<Notice, 'kind' | 'facts'> {
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

function FullText({ id }: { id: string }) {
  const one = useQuery({
    queryKey: ['admin', 'mailbox', id],
    queryFn: () => apiFetch<{ message: Message }>(`/api/admin/mailbox/${id}`),
  });
  if (one.isPending) return <LoadingBlock />;
  if (one.isError) return <ErrorState message={one.error.message} />;
  return (
    <div className="mt-3 rounded-md bg-ink-50 p-3 ring-1 ring-ink-100">
      <p className="mb-2 text-micro text-ink-500">
        “{one.data.message.subject}” from {one.data.message.from}
      </p>
      <Linkified text={one.data.message.text} />
    </div>
  );
}

function NoticeCard({ n }: { n: Notice }) {
  const [open, setOpen] = useState(false);
  return (
    <li className="px-5 py-3" data-testid="notice">
      <div className="flex flex-wrap items-baseline justify-between gap-x-4 gap-y-1">
        <p className="min-w-0 text-body font-medium break-all text-ink-900">{n.to.join(', ')}</p>
        <p className="text-micro whitespace-nowrap text-ink-500 tabular-nums">{formatDateTime(n.date)}</p>
      </div>
      <ul className="mt-1 flex flex-wrap gap-x-3 gap-y-0.5 text-small text-ink-600">
        {n.facts.map((f) => (
          <li key={f} className="break-words">
            {f}
          </li>
        ))}
      </ul>
      <button
        type="button"
        aria-expanded={open}
        onClick={() => setOpen((v) => !v)}
        className="mt-1.5 text-small font-medium text-lobe-700 hover:underline"
      >
        {open ? 'Hide the message' : 'Read the full message'}
      </button>
      {open ? <FullText id={n.id} /> : null}
    </li>
  );
}

/**
 * The development mailbox: what Lobeline sent, sorted by kind of notice (invitations, resets, receipts, failures…),
 * each with its recipient and the facts worth checking; the full text opens in place.
 */
export function Mailbox() {
  const list = useQuery({
    queryKey: ['admin', 'mailbox'],
    queryFn: () => apiFetch<{ messages: Notice[] }>('/api/admin/mailbox'),
    refetchInterval: 5000,
  });
  if (list.isPending)
    return (
      <Panel>
        <LoadingBlock label="Reading the caught mail…" />
      </Panel>
    );
  if (list.isError) return <ErrorState message={list.error.message} onRetry={() => void list.refetch()} />;
  if (list.data.messages.length === 0)
    return (
      <Panel>
        <EmptyState title="Nothing sent yet">
          Invitations, password resets, shift receipts and failure notices appear here within seconds of being sent.
        </EmptyState>
      </Panel>
    );
  const byKind = new Map<NoticeKind, Notice[]>();
  for (const m of list.data.messages) byKind.set(m.kind, [...(byKind.get(m.kind) ?? []), m]);
  return (
    <div className="space-y-5">
      <nav aria-label="Kinds of notice" className="flex flex-wrap gap-2">
        {NOTICE_KINDS.filter((k) => byKind.has(k)).map((k) => (
          <a
            key={k}
            href={`#notices-${k}`}
            className="inline-flex items-center gap-1.5 rounded-full bg-white px-3 py-1 text-small text-ink-700 ring-1 ring-ink-200 hover:bg-ink-50"
          >
            {NOTICE_KIND_WORDS[k].title}
            <Badge tone="neutral">{byKind.get(k)?.length ?? 0}</Badge>
          </a>
        ))}
      </nav>
      {NOTICE_KINDS.filter((k) => byKind.has(k)).map((k) => (
        <section
          key={k}
          id={`notices-${k}`}
          data-testid={`notice-group-${k}`}
          className="min-w-0 rounded-panel bg-white shadow-panel ring-1 ring-ink-100"
        >
          <header className="border-b border-ink-100 px-5 py-3">
            <h2 className="text-lead font-semibold text-ink-900">
              {NOTICE_KIND_WORDS[k].title}{' '}
              <span className="text-small font-normal text-ink-500">({byKind.get(k)?.length ?? 0})</span>
            </h2>
            <p className="text-small text-ink-500">{NOTICE_KIND_WORDS[k].about}</p>
          </header>
          <ul className="divide-y divide-ink-100">
            {(byKind.get(k) ?? []).slice(0, 50).map((n) => (
              <NoticeCard key={n.id} n={n} />
            ))}
          </ul>
        </section>
      ))}
    </div>
  );
}
