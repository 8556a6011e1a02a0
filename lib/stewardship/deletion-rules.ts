// When a stored raw file may be deleted (C10, issue 14), as pure rules the server applies at both steps (request and
// confirmation) and the register uses to explain itself. Nothing is deleted before its retention date: a file
// without any retention date is kept (deleting needs a decision written down first), a file is kept through the
// whole day its retention ends, and a legal hold on the file or its campaign blocks deletion outright.

export interface DeletionSubject {
  /** The file's own retention date, else its campaign's (YYYY-MM-DD), or null when neither is set. */
  retentionUntil: string | null;
  fileLegalHold: boolean;
  campaignLegalHold: boolean;
  deleted: boolean;
}

/** Reasons in plain words why the file may not be deleted on `today` (YYYY-MM-DD, UTC); empty when it may. */
export function deletionBlockers(s: DeletionSubject, today: string): string[] {
  const out: string[] = [];
  if (s.deleted) out.push('This file has already been deleted.');
  if (s.fileLegalHold) out.push('This file is under a legal hold. It cannot be deleted until the hold is lifted.');
  if (s.campaignLegalHold)
    out.push('Its campaign is under a legal hold. None of its files can be deleted until the hold is lifted.');
  if (s.retentionUntil === null) {
    out.push(
      'No retention date is set for this file or its campaign, so it is kept. Set a date before asking to delete it.',
    );
  } else if (today <= s.retentionUntil) {
    out.push(
      `This file must be kept until ${s.retentionUntil}, its retention date. It can be deleted from the next day on.`,
    );
  }
  return out;
}

/** The effective retention date: the file's own where set, else its campaign's. */
export function effectiveRetention(fileRetention: string | null, campaignRetention: string | null): string | null {
  return fileRetention ?? campaignRetention;
}
