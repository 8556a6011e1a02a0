import Link from 'next/link';
import { LogoMark } from '@/components/shell/logo';

/** The text of a missing page (HTTP 404), with a way back. */
export function NotFoundNotice() {
  return (
    <div
      className="mx-auto flex min-h-[50vh] max-w-lg flex-col items-center justify-center px-4 text-center"
      data-testid="not-found"
    >
      <LogoMark className="size-10" />
      <h1 className="mt-4 text-title font-semibold text-ink-900">Nothing at this address</h1>
      <p className="mt-2 text-body text-ink-600">
        The page does not exist, or it belongs to a team you are not a member of. Check the address, or start again from
        the overview.
      </p>
      <Link href="/" className="mt-6 text-body font-medium text-lobe-700 hover:underline">
        Go to the overview
      </Link>
    </div>
  );
}
