'use client';

import Link from 'next/link';
import { type FormEvent, useState } from 'react';
import { Button } from '@/components/ui/button';
import { Field } from '@/components/ui/field';
import { ApiError, apiFetch, detailsByField } from '@/lib/api/client';
import { FormMessage } from './form-bits';

export function ResetRequestForm() {
  const [pending, setPending] = useState(false);
  const [done, setDone] = useState<string | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [fields, setFields] = useState<Record<string, string>>({});

  async function onSubmit(e: FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const email = String(new FormData(e.currentTarget).get('email') ?? '');
    setPending(true);
    setError(null);
    setFields({});
    try {
      const r = await apiFetch<{ message: string }>('/api/auth/password-reset', { method: 'POST', json: { email } });
      setDone(r.message);
    } catch (err) {
      setFields(detailsByField(err));
      setError(err instanceof ApiError && err.details.length === 0 ? err.message : null);
    } finally {
      setPending(false);
    }
  }

  return (
    <form onSubmit={onSubmit} noValidate className="space-y-5">
      <div>
        <h1 className="text-title font-semibold text-ink-900">Choose a new password</h1>
        <p className="mt-1 text-small text-ink-500">
          Enter the e-mail address of your account and we will send you a link to set a new password.
        </p>
      </div>
      {done ? (
        <FormMessage tone="ok" testId="reset-requested">
          {done}
        </FormMessage>
      ) : null}
      {error ? <FormMessage tone="error">{error}</FormMessage> : null}
      {!done ? (
        <>
          <Field
            label="E-mail address"
            name="email"
            type="email"
            autoComplete="username"
            required
            error={fields.email}
          />
          <Button type="submit" className="w-full" isLoading={pending}>
            Send the link
          </Button>
        </>
      ) : null}
      <p className="text-center text-small">
        <Link href="/sign-in" className="font-medium text-lobe-700 hover:underline">
          Back to sign-in
        </Link>
      </p>
    </form>
  );
}
