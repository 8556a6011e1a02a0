import type { Metadata } from 'next';
import { redirect } from 'next/navigation';
import { SignInForm } from '@/components/auth/sign-in-form';
import { getActor } from '@/lib/auth/actor';

export const metadata: Metadata = { title: 'Sign in' };

const NOTICES: Record<string, string> = {
  signedOut: 'You have signed out.',
  reset: 'Your new password is set. Sign in with it.',
  invited: 'Your account is ready. Sign in with the password you chose.',
};

export default async function SignInPage({
  searchParams,
}: {
  searchParams: Promise<Record<string, string | string[] | undefined>>;
}) {
  const sp = await searchParams;
  const one = (v: string | string[] | undefined) => (Array.isArray(v) ? v[0] : v) ?? null;
  if (await getActor()) redirect('/');
  const notice = one(sp.signedOut)
    ? NOTICES.signedOut
    : one(sp.reset)
      ? NOTICES.reset
      : one(sp.invited)
        ? NOTICES.invited
        : null;
  // proxy.ts has already refused a malformed return address (400) and dropped a foreign one.
  return <SignInForm next={one(sp.next) ?? one(sp.callbackUrl)} initialError={one(sp.error)} notice={notice ?? null} />;
}
