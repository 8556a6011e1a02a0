import type { Metadata } from 'next';
import { headers } from 'next/headers';
import { NewPasswordForm } from '@/components/auth/new-password-form';
import { TokenProblem } from '@/components/auth/token-problem';
import { inspectInvitation } from '@/lib/auth/invitations';
import { ipFromHeaders } from '@/lib/auth/sign-in';
import { TOKEN_STATE_MESSAGES } from '@/lib/auth/tokens';

export const metadata: Metadata = { title: 'Accept your invitation', referrer: 'no-referrer' };
export const dynamic = 'force-dynamic';

const ROLE = { operator: 'operator', analyst: 'analyst', pi: 'PI' } as const;
const FACILITY = { steward: 'data steward', admin: 'administrator' } as const;

export default async function InvitePage({ params }: { params: Promise<{ token: string }> }) {
  const { token } = await params;
  const inv = await inspectInvitation(token, ipFromHeaders(await headers()));
  if (inv.state !== 'valid') {
    return <TokenProblem title="This invitation cannot be used" message={TOKEN_STATE_MESSAGES[inv.state].invitation} />;
  }
  const what = [
    inv.teamName && inv.role ? `${ROLE[inv.role]} in ${inv.teamName}` : null,
    inv.facilityRole ? `${FACILITY[inv.facilityRole]} of the facility` : null,
  ]
    .filter(Boolean)
    .join(' and ');
  return (
    <div className="space-y-5">
      <div>
        <h1 className="text-title font-semibold text-ink-900">Welcome to Lobeline</h1>
        <p className="mt-1 text-small text-ink-500" data-testid="invitation-role">
          You are invited as {what}. Choose your password to activate the account.
        </p>
      </div>
      <NewPasswordForm mode="invite" token={token} email={inv.email} defaultName={inv.name} />
    </div>
  );
}
