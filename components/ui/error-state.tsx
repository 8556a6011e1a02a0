'use client';

import { Button } from './button';

/** A plain message when loading failed, with an optional retry. */
export function ErrorState({
  title = 'This could not be loaded',
  message,
  details,
  onRetry,
}: {
  title?: string;
  message: string;
  details?: string[];
  onRetry?: () => void;
}) {
  return (
    <div role="alert" className="rounded-md border border-fault-100 bg-fault-50 px-4 py-3" data-testid="error-state">
      <p className="text-body font-medium text-fault-700">{title}</p>
      <p className="mt-1 text-small text-ink-700">{message}</p>
      {details?.length ? (
        <ul className="mt-2 list-disc space-y-0.5 pl-5 text-small text-ink-700">
          {details.map((d) => (
            <li key={d}>{d}</li>
          ))}
        </ul>
      ) : null}
      {onRetry ? (
        <Button variant="secondary" size="sm" className="mt-3" onClick={onRetry}>
          Try again
        </Button>
      ) : null}
    </div>
  );
}
