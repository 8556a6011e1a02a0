// Test data of the stewardship routes (C10, issue 14): a stored raw file past its retention date, with its object
// in the local S3 store, and an open deletion request of it.
import { buckets, deleteObject, putObject } from '@/lib/storage/s3';
import { DeletionRequest, RawFile, Scan } from '@/models';
import type { TeamData, World } from './world';

/** A raw file of team `t`'s campaign, kept until 2020-01-01 (so deletable), its object in storage. */
export async function freshDeletableFile(
  w: World,
  t: TeamData,
  over: { retentionUntil?: string | null; legalHold?: boolean } = {},
): Promise<{ rawFileId: number; bucket: string; key: string; sha256: string }> {
  const scanId = await w.freshScan(t);
  const scan = await Scan.findByPk(scanId);
  const raw = await RawFile.findByPk(scan!.raw_file_id);
  const body = new TextEncoder().encode(`stewardship test object ${raw!.id}`);
  await putObject({ bucket: raw!.bucket, key: raw!.storage_key, body, contentLength: body.length });
  await raw!.update({
    retention_until: over.retentionUntil === undefined ? '2020-01-01' : over.retentionUntil,
    legal_hold: over.legalHold ?? false,
    size_bytes: body.length,
  });
  return { rawFileId: raw!.id, bucket: raw!.bucket, key: raw!.storage_key, sha256: raw!.sha256 };
}

/** An open deletion request of a fresh deletable file, asked for by `requestedBy` (the steward). */
export async function freshDeletionRequest(w: World, t: TeamData, requestedBy: number): Promise<number> {
  const { rawFileId } = await freshDeletableFile(w, t);
  const r = await DeletionRequest.create({
    raw_file_id: rawFileId,
    requested_by: requestedBy,
    confirmed_by: null,
    reason: 'Test: past retention and no longer needed.',
    confirmed_at: null,
    cancelled_at: null,
  });
  return r.id;
}

/** A raw file of team `t`'s campaign that is archived: its object in the archive bucket only (archive and restore). */
export async function freshArchivedFile(w: World, t: TeamData): Promise<{ rawFileId: number; sha256: string }> {
  const f = await freshDeletableFile(w, t);
  const body = new TextEncoder().encode(`stewardship test object ${f.rawFileId}`);
  await putObject({ bucket: buckets().archive, key: f.key, body, contentLength: body.length });
  await deleteObject(f.bucket, f.key);
  await RawFile.update(
    { archive_state: 'archived', archive_bucket: buckets().archive, archive_key: f.key, archived_at: new Date() },
    { where: { id: f.rawFileId } },
  );
  return { rawFileId: f.rawFileId, sha256: f.sha256 };
}
