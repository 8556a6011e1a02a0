// lib/mail/notice-kinds.ts sorts the mail Lobeline itself writes (lib/auth/emails.ts, lib/ingest/receipt.ts,
// lib/jobs/notify.ts); the subjects below are the ones those senders use.
import { describe, expect, it } from 'vitest';
import { noticeFacts, noticeKind } from '@/lib/mail/notice-kinds';

describe('noticeKind', () => {
  it('sorts each sender’s subject into its kind', () => {
    expect(noticeKind('Your invitation to Lobeline')).toBe('invitation');
    expect(noticeKind('You have new access in Lobeline')).toBe('access_added');
    expect(noticeKind('Reset your Lobeline password')).toBe('password_reset');
    expect(noticeKind('Shift receipt: Night shift (Ar 800 nm) — 3 files, 1 quarantined')).toBe('shift_receipt');
    expect(noticeKind('Lobeline: reduction of scan 12 failed')).toBe('reduction_failed');
    expect(noticeKind('Matrix run 7')).toBe('other');
  });

  it('picks the reason of a failure and the files of a receipt', () => {
    const failure = 'The reduction of scan 12 failed\n\nReason:\nThe wavelength is missing.\n\nScan page: x';
    expect(noticeFacts('reduction_failed', 'Lobeline: reduction of scan 12 failed', failure)).toEqual([
      'reduction of scan 12 failed',
      'reason: The wavelength is missing.',
    ]);
    const receipt = 'Lobeline shift receipt\n\nShift:     Night shift\nFiles:     3 (1.2 MiB); 2 accepted';
    expect(noticeFacts('shift_receipt', 'Shift receipt: Night shift', receipt)).toEqual([
      'shift “Night shift”',
      '3 (1.2 MiB); 2 accepted',
    ]);
  });
});
