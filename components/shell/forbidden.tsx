import { LinkButton } from '@/components/ui/link-button';

/** The refusal text with a way back (the API refuses the same requests with 403). */
export function Forbidden({
  message,
  title = 'You do not have access to this page',
}: {
  message: string;
  title?: string;
}) {
  return (
    <div
      className="mx-auto max-w-xl rounded-panel bg-white px-6 py-8 text-center shadow-panel ring-1 ring-ink-100"
      data-testid="forbidden"
    >
      <svg aria-hidden="true" viewBox="0 0 24 24" className="mx-auto mb-3 size-9 text-ink-300">
        <rect x="5" y="10.5" width="14" height="10" rx="2" fill="none" stroke="currentColor" strokeWidth="1.6" />
        <path d="M8.5 10.5V8a3.5 3.5 0 0 1 7 0v2.5" fill="none" stroke="currentColor" strokeWidth="1.6" />
      </svg>
      <h1 className="text-title font-semibold text-ink-900">{title}</h1>
      <p className="mt-2 text-body text-ink-600" role="alert">
        {message}
      </p>
      <p className="mt-1 text-small text-ink-500">
        If you think you should have access, ask the team's PI or a Lobeline administrator.
      </p>
      <div className="mt-5 flex justify-center">
        <LinkButton href="/" variant="secondary">
          Back to the overview
        </LinkButton>
      </div>
    </div>
  );
}
