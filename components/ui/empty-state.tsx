import type { ReactNode } from 'react';

/** Shown where a list has nothing in it yet; says what to do next. */
export function EmptyState({ title, children, action }: { title: string; children?: ReactNode; action?: ReactNode }) {
  return (
    <div
      className="flex flex-col items-center justify-center gap-2 rounded-md border border-dashed border-ink-200 px-6 py-10 text-center"
      data-testid="empty-state"
    >
      <svg aria-hidden="true" viewBox="0 0 40 24" className="mb-1 h-6 w-10 text-ink-300">
        <ellipse cx="15" cy="12" rx="11" ry="7" fill="none" stroke="currentColor" strokeWidth="2" />
        <ellipse
          cx="25"
          cy="12"
          rx="11"
          ry="7"
          fill="none"
          stroke="currentColor"
          strokeWidth="2"
          strokeDasharray="3 3"
        />
      </svg>
      <p className="text-body font-medium text-ink-800">{title}</p>
      {children ? <div className="max-w-md text-small text-ink-500">{children}</div> : null}
      {action ? <div className="mt-2">{action}</div> : null}
    </div>
  );
}
