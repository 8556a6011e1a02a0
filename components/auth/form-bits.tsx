'use client';

/** The top-of-form message (error or confirmation) of the account forms. */
export function FormMessage({ tone, children, testId }: { tone: 'error' | 'ok'; children: string; testId?: string }) {
  return (
    <p
      role={tone === 'error' ? 'alert' : 'status'}
      data-testid={testId}
      className={
        tone === 'error'
          ? 'rounded-md border border-fault-100 bg-fault-50 px-3 py-2 text-small text-fault-700'
          : 'rounded-md bg-lobe-50 px-3 py-2 text-small text-lobe-800'
      }
    >
      {children}
    </p>
  );
}
