'use client';
// The browser's own "leave this page?" question while files dropped on the page are not stored yet (checked but not
// sent, queued, on their way, or failed and waiting for a retry). Browsers show their own fixed wording; the page
// cannot change it, only ask for it (HTML Living Standard, "unloading documents": the beforeunload event).
import { useEffect } from 'react';
import type { ItemPhase } from './use-ingest-queue';

/** Phases in which a dropped file is still only in this page. */
export const UNSENT_PHASES: readonly ItemPhase[] = [
  'checking',
  'ready',
  'queued',
  'sending',
  'waiting-hash',
  'verifying',
  'failed',
];

export function unsentCount(items: { phase: ItemPhase }[]): number {
  return items.filter((i) => UNSENT_PHASES.includes(i.phase)).length;
}

export function useLeaveWarning(unsent: number): void {
  useEffect(() => {
    if (unsent === 0) return;
    const onBeforeUnload = (e: BeforeUnloadEvent) => {
      e.preventDefault();
      // older engines need returnValue set to ask
      e.returnValue = '';
    };
    window.addEventListener('beforeunload', onBeforeUnload);
    return () => window.removeEventListener('beforeunload', onBeforeUnload);
  }, [unsent]);
}
