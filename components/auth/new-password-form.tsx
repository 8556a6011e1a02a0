'use client';

import { useRouter } from 'next/navigation';
import { type FormEvent, useState } from 'react';
import { Button } from '@/components/ui/button';
import { Field } from '@/components/ui/field';
import { ApiError, apiFetch, detailsByField } from '@/lib/api/client';
import { FormMessage } from './form-bits';

/**
 * Sets a password through a single-use link: the reset form (`mode="reset"`) or the invitation form
 * (`mode="invite"`, which also asks for the name).
 */
export function NewPasswordForm({
  mode,
  token,
  email,
  defaultName,
}: {
  mode: 'reset' | 'invite';
  token: string;
  email: string | null;
  defaultName?: string | null;
}) {
  const router = useRouter();
  const [pending, setPending] = useState(false);
  const [error, setError] = useState<string | null>(null);
  const [fields, setFields] = useState<Record<string, string>>({});

  async function onSubmit(e: FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const form = new FormData(e.currentTarget);
    const body: Record<string, string> = {
      token,
      password: String(form.get('password') ?? ''),
      confirm: String(form.get('confirm') ?? ''),
    };
    if (mode === 'invite') body.name = String(form.get('name') ?? '');
    setPending(true);
    setError(null);
    setFields({});
    try {
      await apiFetch(mode === 'reset' ? '/api/auth/password-reset/complete' : '/api/auth/invitations/accept', {
        method: 'POST',
        json: body,
      });
      router.replace(mode === 'reset' ? '/sign-in?reset=1' : '/sign-in?invited=1');
    } catch (err) {
      const byField = detailsByField(err);
      setFields(byField);
      setError(Object.keys(byField).length ? null : err instanceof ApiError ? err.message : 'This did not work.');
      setPending(false);
    }
  }

  return (
    <form onSubmit={onSubmit} noValidate className="space-y-5">
      {error ? (
        <FormMessage tone="error" testId="form-error">
          {error}
        </FormMessage>
      ) : null}
      {email ? (
        <div>
          <p className="text-small font-medium text-ink-800">Account</p>
          <p className="text-body text-ink-700" data-testid="account-email">
            {email}
          </p>
        </div>
      ) : null}
      {mode === 'invite' ? (
        <Field
          label="Your name"
          name="name"
          autoComplete="name"
          defaultValue={defaultName ?? ''}
          required
          error={fields.name}
        />
      ) : null}
      <Field
        label="New password"
        name="password"
        type="password"
        autoComplete="new-password"
        required
        hint="At least 12 characters, and not one of the passwords everybody tries first. A few unrelated words make a good password."
        error={fields.password}
      />
      <Field
        label="Repeat the password"
        name="confirm"
        type="password"
        autoComplete="new-password"
        required
        error={fields.confirm}
      />
      <Button type="submit" className="w-full" isLoading={pending}>
        {mode === 'reset' ? 'Set the new password' : 'Activate my account'}
      </Button>
    </form>
  );
}
