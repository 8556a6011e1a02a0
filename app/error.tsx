'use client';

import { useEffect } from 'react';
import { Button } from '@/components/ui/button';

// The page-level fallback: a plain message and a retry; the details go to the server log and the console.
export default function ErrorPage({ error, reset }: { error: Error & { digest?: string }; reset: () => void }) {
  useEffect(() => {
    console.error(error);
  }, [error]);
  return (
    <div className="mx-auto max-w-lg px-4 py-20 text-center">
      <h1 className="text-title font-semibold text-ink-900">This page could not be shown</h1>
      <p className="mt-2 text-body text-ink-600">
        Something went wrong on our side. Nothing you entered was lost on the server; try again, and if it keeps
        happening tell your administrator{error.digest ? ` (reference ${error.digest})` : ''}.
      </p>
      <div className="mt-6 flex justify-center gap-3">
        <Button onClick={reset}>Try again</Button>
        <a
          href="/"
          className="inline-flex h-10 items-center rounded-md px-4 text-body font-medium text-ink-700 hover:bg-ink-100"
        >
          Go to the overview
        </a>
      </div>
    </div>
  );
}
