// Shared steps of the browser tests: the demo sign-ins of scripts/seed.ts and a sign-in through the form.
import { expect, type Page } from '@playwright/test';

export const DEMO_PASSWORD = 'lobeline-demo';
export const DEMO = {
  operator: 'operator@harbor-point.example',
  analyst: 'analyst@harbor-point.example',
  pi: 'pi@harbor-point.example',
  phaseAnalyst: 'phase-analyst@harbor-point.example',
  steward: 'steward@harbor-point.example',
  admin: 'admin@harbor-point.example',
} as const;

export const MAIL_DIR = process.env.MAIL_CATCHER_DIR ?? '.data/test/mail';

/** Signs in through the form and waits for the overview. */
export async function signIn(page: Page, email: string, password = DEMO_PASSWORD): Promise<void> {
  await page.goto('/sign-in');
  await page.getByLabel('E-mail address').fill(email);
  await page.getByLabel('Password').fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page.getByTestId('user-menu')).toBeVisible();
}

export async function signOut(page: Page): Promise<void> {
  await page.getByTestId('user-menu').click();
  await page.getByTestId('sign-out').click();
  await expect(page.getByTestId('sign-in-notice')).toHaveText('You have signed out.');
}

/** The link of `kind` in a caught message, as a path (the catcher stores the full APP_ORIGIN link). */
export function linkPath(text: string, kind: 'invite' | 'reset-password'): string {
  const m = text.match(new RegExp(`https?://[^\\s]+/${kind}/([A-Za-z0-9_-]{43})`));
  if (!m?.[1]) throw new Error(`no ${kind} link in the message`);
  return `/${kind}/${m[1]}`;
}
