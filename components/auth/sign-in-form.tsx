'use client';

import Link from 'next/link';
import { useRouter } from 'next/navigation';
import { signIn } from 'next-auth/react';
import { type FormEvent, useState } from 'react';
import { Button } from '@/components/ui/button';
import { Field } from '@/components/ui/field';
import { safeNextPath } from '@/lib/auth/redirect';

const MESSAGES: Record<string, string> = {
  CredentialsSignin: 'The e-mail address or password is not right.',
  deactivated: 'This account has been deactivated. Ask a Lobeline administrator if you need access again.',
  rate_limited: 'Too many failed sign-ins. Please wait a minute before trying again.',
  unavailable: 'Signing in is not possible right now because a service is not answering. Please try again in a minute.',
  SessionRequired: 'Please sign in to continue.',
};

function messageFor(code: string | null | undefined): string | null {
  if (!code) return null;
  return MESSAGES[code] ?? 'Signing in did not work. Please try again.';
}

export function SignInForm({
  next,
  initialError,
  notice,
}: {
  next?: string | null;
  initialError?: string | null;
  notice?: string | null;
}) {
  const router = useRouter();
  const [error, setError] = useState<string | null>(messageFor(initialError));
  const [fieldErrors, setFieldErrors] = useState<{ email?: string; password?: string }>({});
  const [pending, setPending] = useState(false);

  async function onSubmit(e: FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const form = new FormData(e.currentTarget);
    const email = String(form.get('email') ?? '').trim();
    const password = String(form.get('password') ?? '');
    const fe: typeof fieldErrors = {};
    if (!email) fe.email = 'Enter your e-mail address.';
    if (!password) fe.password = 'Enter your password.';
    setFieldErrors(fe);
    if (fe.email || fe.password) return;
    setPending(true);
    setError(null);
    try {
      const result = await signIn('credentials', { email, password, redirect: false });
      if (!result || result.error || !result.ok) {
        setError(messageFor(result?.error ?? 'unavailable'));
        setPending(false);
        return;
      }
      // Only a path of this origin, as the browser's own URL parser reads it (lib/auth/redirect.ts).
      router.replace(safeNextPath(next, window.location.origin));
      router.refresh();
    } catch {
      setError(messageFor('unavailable'));
      setPending(false);
    }
  }

  return (
    <form onSubmit={onSubmit} noValidate className="space-y-5" aria-describedby={error ? 'sign-in-error' : undefined}>
      <div>
        <h1 className="text-title font-semibold text-ink-900">Sign in</h1>
        <p className="mt-1 text-small text-ink-500">Use the e-mail address your lab registered for you.</p>
      </div>
      {notice ? (
        <p
          className="rounded-md bg-lobe-50 px-3 py-2 text-small text-lobe-800"
          role="status"
          data-testid="sign-in-notice"
        >
          {notice}
        </p>
      ) : null}
      {error ? (
        <p
          id="sign-in-error"
          className="rounded-md border border-fault-100 bg-fault-50 px-3 py-2 text-small text-fault-700"
          role="alert"
          data-testid="sign-in-error"
        >
          {error}
        </p>
      ) : null}
      <Field
        label="E-mail address"
        name="email"
        type="email"
        autoComplete="username"
        required
        autoFocus
        error={fieldErrors.email}
      />
      <Field
        label="Password"
        name="password"
        type="password"
        autoComplete="current-password"
        required
        error={fieldErrors.password}
      />
      <Button type="submit" className="w-full" isLoading={pending}>
        {pending ? 'Signing in…' : 'Sign in'}
      </Button>
      <p className="text-center text-small text-ink-500">
        <Link href="/reset-password" className="font-medium text-lobe-700 hover:text-lobe-800 hover:underline">
          Forgot your password?
        </Link>
      </p>
    </form>
  );
}
