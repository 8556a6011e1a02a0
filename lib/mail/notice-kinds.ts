// Sorts caught messages (development mailbox) by the kind of notice Lobeline sent, and picks out the facts a
// developer checks first. Pure functions over subject and text, so the page and tests read mail the same way.

export const NOTICE_KINDS = [
  'invitation',
  'access_added',
  'password_reset',
  'shift_receipt',
  'reduction_failed',
  'fixity_alert',
  'other',
] as const;
export type NoticeKind = (typeof NOTICE_KINDS)[number];

export const NOTICE_KIND_WORDS: Record<NoticeKind, { title: string; about: string }> = {
  invitation: { title: 'Invitations', about: 'Single-use links to choose a password; valid for 7 days.' },
  access_added: { title: 'Access added', about: 'People who already had an account and were given a new role.' },
  password_reset: { title: 'Password resets', about: 'Single-use links to choose a new password; valid for 1 hour.' },
  shift_receipt: { title: 'Shift receipts', about: 'The list of files of a closed shift, with their checksums.' },
  reduction_failed: { title: 'Reduction failures', about: 'A scan that could not be reduced, with the reason.' },
  fixity_alert: { title: 'Fixity alerts', about: 'Stored files whose checksum no longer matches.' },
  other: { title: 'Other notices', about: 'Anything Lobeline sent that is none of the above.' },
};

export function noticeKind(subject: string): NoticeKind {
  const s = subject.toLowerCase();
  if (s.includes('invitation')) return 'invitation';
  if (s.includes('new access')) return 'access_added';
  if (s.includes('password')) return 'password_reset';
  if (s.startsWith('shift receipt')) return 'shift_receipt';
  if (s.includes('reduction of') && s.includes('failed')) return 'reduction_failed';
  if (s.includes('fixity') || s.includes('checksum')) return 'fixity_alert';
  return 'other';
}

/** Short facts for the notice card: what the link is for, which shift or scan, the reason. */
export function noticeFacts(kind: NoticeKind, subject: string, text: string): string[] {
  const lines = text.split('\n').map((l) => l.trim());
  const link = text.match(/https?:\/\/\S+/)?.[0] ?? null;
  const path = link ? link.replace(/^https?:\/\/[^/]+/, '') : null;
  const linkPath = path && path.length > 40 ? `${path.slice(0, 37)}…` : path;
  switch (kind) {
    case 'invitation':
    case 'access_added': {
      const as = lines.find((l) => / as .+\.$/.test(l));
      return [as ?? subject, ...(kind === 'invitation' && linkPath ? [`link ${linkPath}`] : [])];
    }
    case 'password_reset':
      return ['expires 1 hour after sending', ...(linkPath ? [`link ${linkPath}`] : [])];
    case 'shift_receipt': {
      const shift = lines.find((l) => l.startsWith('Shift:'))?.replace(/^Shift:\s*/, '');
      const files = lines.find((l) => l.startsWith('Files:'))?.replace(/^Files:\s*/, '');
      return [shift ? `shift “${shift}”` : subject, ...(files ? [files] : [])];
    }
    case 'reduction_failed': {
      const i = lines.indexOf('Reason:');
      const reason = i >= 0 ? lines[i + 1] : undefined;
      return [subject.replace(/^Lobeline: /, ''), ...(reason ? [`reason: ${reason}`] : [])];
    }
    default:
      return [subject];
  }
}
