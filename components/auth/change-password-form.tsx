'use client';

import { type FormEvent, useState } from 'react';
import { Button } from '@/components/ui/button';
import { Field } from '@/components/ui/field';
import { ApiError, apiFetch, detailsByField } from '@/lib/api/client';
import { FormMessage } from './form-bits';

/** Current password, new password twice; on success the other sessions of the account are signed out. */
export function ChangePasswordForm() {
  const [pending, setPending] = useState(false);
  const [error, setError] = useState<string | null>(null);
  const [done, setDone] = useState<string | null>(null);
  const [fields, setFields] = useState<Record<string, string>>({});

  async function onSubmit(e: FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const formEl = e.currentTarget;
    const form = new FormData(formEl);
    setPending(true);
    setError(null);
    setDone(null);
    setFields({});
    try {
      const r = await apiFetch<{ message: string }>('/api/me/password', {
        method: 'POST',
        json: {
          currentPassword: String(form.get('currentPassword') ?? ''),
          password: String(form.get('password') ?? ''),
          confirm: String(form.get('confirm') ?? ''),
        },
      });
      setDone(r.message);
      formEl.reset();
    } catch (err) {
      const byField = detailsByField(err);
      setFields(byField);
      setError(Object.keys(byField).length ? null : err instanceof ApiError ? err.message : 'This did not work.');
    } finally {
      setPending(false);
    }
  }

  return (
    <form onSubmit={onSubmit} noValidate className="space-y-5" data-testid="change-password-form">
      {error ? (
        <FormMessage tone="error" testId="form-error">
          {error}
        </FormMessage>
      ) : null}
      {done ? (
        <FormMessage tone="ok" testId="form-done">
          {done}
        </FormMessage>
      ) : null}
      <Field
        label="Current password"
        name="currentPassword"
        type="password"
        autoComplete="current-password"
        required
        error={fields.currentPassword}
      />
      <Field
        label="New password"
        name="password"
        type="password"
        autoComplete="new-password"
        hint="At least 12 characters, and not one of the passwords everybody tries first."
        required
        error={fields.password}
      />
      <Field
        label="New password again"
        name="confirm"
        type="password"
        autoComplete="new-password"
        required
        error={fields.confirm}
      />
      <Button type="submit" isLoading={pending}>
        {pending ? 'Saving…' : 'Change password'}
      </Button>
    </form>
  );
}
