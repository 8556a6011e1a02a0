import type { ReactNode } from 'react';

export function PageHeader({
  title,
  description,
  actions,
  eyebrow,
}: {
  title: ReactNode;
  description?: ReactNode;
  actions?: ReactNode;
  /** A small line above the title (e.g. the team or campaign it belongs to). */
  eyebrow?: ReactNode;
}) {
  return (
    <div className="mb-6 flex flex-wrap items-end justify-between gap-4">
      <div className="min-w-0">
        {eyebrow ? <p className="text-micro font-semibold tracking-wide text-lobe-700 uppercase">{eyebrow}</p> : null}
        <h1 className="text-display font-semibold text-ink-900">{title}</h1>
        {description ? <p className="mt-1 max-w-3xl text-body text-ink-600">{description}</p> : null}
      </div>
      {actions ? <div className="flex shrink-0 flex-wrap items-center gap-2">{actions}</div> : null}
    </div>
  );
}
