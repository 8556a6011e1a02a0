import type { ReactNode } from 'react';
import { cx } from './cx';

export interface PanelProps {
  title?: ReactNode;
  description?: ReactNode;
  actions?: ReactNode;
  children?: ReactNode;
  className?: string;
  /** Removes the inner padding (for tables that run edge to edge). */
  flush?: boolean;
  'data-testid'?: string;
}

/** A white card with an optional header row. */
export function Panel({ title, description, actions, children, className, flush, ...rest }: PanelProps) {
  return (
    <section
      className={cx('min-w-0 rounded-panel bg-white shadow-panel ring-1 ring-ink-100', className)}
      data-testid={rest['data-testid']}
    >
      {title || actions ? (
        <header className="flex flex-wrap items-start justify-between gap-3 border-b border-ink-100 px-5 py-3.5">
          <div className="min-w-0">
            {title ? <h2 className="text-lead font-semibold text-ink-900">{title}</h2> : null}
            {description ? <p className="mt-0.5 text-small text-ink-500">{description}</p> : null}
          </div>
          {actions ? <div className="flex min-w-0 flex-wrap items-center gap-2">{actions}</div> : null}
        </header>
      ) : null}
      <div className={flush ? '' : 'px-5 py-4'}>{children}</div>
    </section>
  );
}
