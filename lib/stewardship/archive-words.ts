// Words of archive and restore (C10, issue 14), pure so that pages, the API and the worker say the same thing.

export type ArchiveStateWord = 'online' | 'archiving' | 'archived' | 'restoring';

/** Labels of each archive state (the trade's words online and archived; ours for the moving ones). */
export const ARCHIVE_STATE_WORDS: Record<ArchiveStateWord, string> = {
  online: 'online',
  archiving: 'archiving…',
  archived: 'archived',
  restoring: 'restoring…',
};

/** The sentence a reduction of an archived file answers with (API, worker and scan page). */
export const ARCHIVED_REDUCTION_MESSAGE =
  'This scan’s raw file is in the archive, so the scan cannot be reduced until the file is restored. ' +
  'A data steward or the team’s PI can ask for the restore; reduce again once the file is online.';
