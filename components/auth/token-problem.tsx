import Link from 'next/link';

/** The page shown for an expired, used, withdrawn or unknown link. */
export function TokenProblem({
  title,
  message,
  showResetLink,
}: {
  title: string;
  message: string;
  showResetLink?: boolean;
}) {
  return (
    <div className="space-y-4" data-testid="token-problem">
      <h1 className="text-title font-semibold text-ink-900">{title}</h1>
      <p className="rounded-md border border-flare-200 bg-flare-50 px-3 py-2 text-small text-flare-900" role="alert">
        {message}
      </p>
      <div className="flex flex-wrap gap-4 text-small">
        {showResetLink ? (
          <Link href="/reset-password" className="font-medium text-lobe-700 hover:underline">
            Ask for a new link
          </Link>
        ) : null}
        <Link href="/sign-in" className="font-medium text-lobe-700 hover:underline">
          Go to sign-in
        </Link>
      </div>
    </div>
  );
}
