import type { Metadata } from 'next';
import { headers } from 'next/headers';
import { NewPasswordForm } from '@/components/auth/new-password-form';
import { TokenProblem } from '@/components/auth/token-problem';
import { inspectReset } from '@/lib/auth/password-reset';
import { ipFromHeaders } from '@/lib/auth/sign-in';
import { TOKEN_STATE_MESSAGES } from '@/lib/auth/tokens';

export const metadata: Metadata = { title: 'Choose a new password', referrer: 'no-referrer' };
export const dynamic = 'force-dynamic';

export default async function ResetWithTokenPage({ params }: { params: Promise<{ token: string }> }) {
  const { token } = await params;
  const { state, email } = await inspectReset(token, ipFromHeaders(await headers()));
  if (state !== 'valid') {
    return <TokenProblem title="This link cannot be used" message={TOKEN_STATE_MESSAGES[state].reset} showResetLink />;
  }
  return (
    <div className="space-y-5">
      <div>
        <h1 className="text-title font-semibold text-ink-900">Choose a new password</h1>
        <p className="mt-1 text-small text-ink-500">The link works once and expires one hour after it was sent.</p>
      </div>
      <NewPasswordForm mode="reset" token={token} email={email} />
    </div>
  );
}
