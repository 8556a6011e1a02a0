'use client';

import { useState } from 'react';
import { Button } from '@/components/ui/button';
import { Panel } from '@/components/ui/panel';
import { apiFetch } from '@/lib/api/client';

interface Notice {
  kind: string;
  label: string;
  hint: string;
}

/** The switches of /settings/notifications, saved with PUT /api/me/notifications. */
export function NotificationSettings({
  initial,
  notices,
  alwaysSent,
}: {
  initial: Record<string, boolean>;
  notices: Notice[];
  alwaysSent: string[];
}) {
  const [prefs, setPrefs] = useState(initial);
  const [saving, setSaving] = useState(false);
  const [notice, setNotice] = useState<{ ok: boolean; text: string } | null>(null);

  async function save() {
    setSaving(true);
    setNotice(null);
    try {
      const r = await apiFetch<{ prefs: Record<string, boolean> }>('/api/me/notifications', {
        method: 'PUT',
        json: prefs,
      });
      setPrefs(r.prefs);
      setNotice({ ok: true, text: 'Your choices are saved; the next e-mails follow them.' });
    } catch (err) {
      setNotice({
        ok: false,
        text: err instanceof Error ? err.message : 'Your choices could not be saved. Try again.',
      });
    } finally {
      setSaving(false);
    }
  }

  return (
    <div className="space-y-6">
      <Panel title="Notices you can turn off">
        <form
          className="space-y-4"
          onSubmit={(e) => {
            e.preventDefault();
            void save();
          }}
        >
          <ul className="space-y-3">
            {notices.map((n) => (
              <li key={n.kind} className="flex items-start gap-3">
                <input
                  id={`notice-${n.kind}`}
                  type="checkbox"
                  className="mt-1 size-4 shrink-0 accent-lobe-600"
                  checked={prefs[n.kind] !== false}
                  onChange={(e) => setPrefs((p) => ({ ...p, [n.kind]: e.target.checked }))}
                  aria-describedby={`notice-${n.kind}-hint`}
                />
                <div>
                  <label htmlFor={`notice-${n.kind}`} className="text-body font-medium text-ink-900">
                    {n.label}
                  </label>
                  <p id={`notice-${n.kind}-hint`} className="text-small text-ink-500">
                    {n.hint}
                  </p>
                </div>
              </li>
            ))}
          </ul>
          {notice ? (
            <p
              data-testid="prefs-notice"
              role={notice.ok ? 'status' : 'alert'}
              className={
                notice.ok
                  ? 'rounded-md bg-lobe-50 px-3 py-2 text-small text-lobe-800'
                  : 'rounded-md border border-fault-100 bg-fault-50 px-3 py-2 text-small text-fault-700'
              }
            >
              {notice.text}
            </p>
          ) : null}
          <Button type="submit" isLoading={saving}>
            Save my choices
          </Button>
        </form>
      </Panel>
      <Panel title="Always sent" data-testid="always-sent">
        <p className="text-small text-ink-600">
          {alwaysSent.join(' and ')} always reach you: they are the only way into your account.
        </p>
      </Panel>
    </div>
  );
}
