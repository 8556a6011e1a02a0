// Row builders shared by integration tests (kept free of server-only imports, so any test file can use them).
import { randomBytes, randomUUID } from 'node:crypto';
import { buckets } from '@/lib/storage/s3';
import type { RawFile } from '@/models';

/** The columns of an accepted, verified raw-file row with every optional field empty; `over` sets the rest. */
export function rawFileRow(teamId: number, over: Partial<RawFile> = {}) {
  return {
    team_id: teamId,
    sha256: randomBytes(32).toString('hex'),
    bucket: buckets().raw,
    storage_key: `raw/matrix/${randomUUID()}.h5`,
    size_bytes: 1000,
    original_name: 'matrix.h5',
    status: 'accepted' as const,
    quarantine_reasons: null,
    metadata: null,
    metadata_completeness: null,
    uploaded_by: null,
    verified_at: new Date(),
    released_by: null,
    released_at: null,
    replaced_by_id: null,
    archived_at: null,
    archive_key: null,
    embargo_until: null,
    retention_until: null,
    last_fixity_at: null,
    last_fixity_ok: null,
    deleted_at: null,
    ...over,
  };
}
