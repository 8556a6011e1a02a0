// The texts of the account e-mails (invitation, password reset, added to a team). Plain text plus simple HTML.
import { getEnv } from '@/lib/env';

const escapeHtml = (s: string) =>
  s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c] ?? c);

function html(paragraphs: string[], link?: { href: string; label: string }): string {
  const body = paragraphs.map((p) => `<p style="margin:0 0 12px">${escapeHtml(p)}</p>`).join('');
  const button = link
    ? `<p style="margin:18px 0"><a href="${escapeHtml(link.href)}" style="background:#0f8077;color:#fff;padding:10px 16px;border-radius:6px;text-decoration:none">${escapeHtml(link.label)}</a></p><p style="margin:0 0 12px;color:#5a6b80;font-size:13px">Or open this address: ${escapeHtml(link.href)}</p>`
    : '';
  return `<div style="font-family:system-ui,sans-serif;color:#172031;font-size:15px;line-height:1.5">${body}${button}<p style="color:#5a6b80;font-size:12px">Lobeline · Harbor Point Ultrafast Lab</p></div>`;
}

export function invitationLink(token: string): string {
  return `${getEnv().APP_ORIGIN}/invite/${token}`;
}

export function resetLink(token: string): string {
  return `${getEnv().APP_ORIGIN}/reset-password/${token}`;
}

export function invitationMail(input: { token: string; invitedBy: string; what: string }) {
  const link = invitationLink(input.token);
  const lines = [
    'Hello,',
    `${input.invitedBy} has invited you to Lobeline as ${input.what}.`,
    'Open the link below to choose your password and activate your account. The link works once and expires in 7 days.',
  ];
  return {
    subject: 'Your invitation to Lobeline',
    text: `${lines.join('\n\n')}\n\n${link}\n\nIf you did not expect this invitation, you can ignore this e-mail.\n\nLobeline`,
    html: html([...lines, 'If you did not expect this invitation, you can ignore this e-mail.'], {
      href: link,
      label: 'Accept the invitation',
    }),
  };
}

export function resetMail(input: { token: string; name: string }) {
  const link = resetLink(input.token);
  const lines = [
    `Hello ${input.name},`,
    'Someone (hopefully you) asked to reset the password of your Lobeline account.',
    'Open the link below to choose a new password. The link works once and expires in 1 hour.',
  ];
  return {
    subject: 'Reset your Lobeline password',
    text: `${lines.join('\n\n')}\n\n${link}\n\nIf you did not ask for this, ignore this e-mail: your password stays as it is.\n\nLobeline`,
    html: html([...lines, 'If you did not ask for this, ignore this e-mail: your password stays as it is.'], {
      href: link,
      label: 'Choose a new password',
    }),
  };
}

export function addedMail(input: { name: string; invitedBy: string; what: string }) {
  const origin = getEnv().APP_ORIGIN;
  const lines = [`Hello ${input.name},`, `${input.invitedBy} has given you access in Lobeline as ${input.what}.`];
  return {
    subject: 'You have new access in Lobeline',
    text: `${lines.join('\n\n')}\n\nSign in at ${origin}/sign-in\n\nLobeline`,
    html: html(lines, { href: `${origin}/sign-in`, label: 'Sign in' }),
  };
}
