// tsx scripts/demo-fixity.ts — a planted corruption for the fixity demo of the fictional Harbor Point Ultrafast Lab
// (dev instance only, run by scripts/start.sh after the seed; idempotent). Adds one catalogued raw file to
// "He 800 nm elliptical" whose stored bytes were changed after cataloguing: the object in the raw bucket no longer
// matches the recorded SHA-256, as if a disk had flipped bits. The next fixity run that reaches it (the schedule, or
// "Check 50 files now" on /stewardship/fixity) flags it, audits it and e-mails the stewards. The bytes are random
// demo bytes, not a scan file; its scan is never reduced (it stays "uploaded").
import { createHash, randomBytes } from 'node:crypto';
import path from 'node:path';

const invokedDirectly = !!process.argv[1] && path.resolve(process.argv[1]) === path.resolve(import.meta.filename);
if (invokedDirectly) await import('./server-only-shim');

export const PLANTED_NAME = 'planted-corruption-demo.h5';

export async function plantDemoCorruption(): Promise<string> {
  const { getDb } = await import('@/lib/db');
  getDb();
  const { Campaign, RawFile, Scan, Shift } = await import('@/models');
  const { buckets, putObject } = await import('@/lib/storage/s3');
  if (await RawFile.findOne({ where: { original_name: PLANTED_NAME } })) return 'demo fixity: already planted';
  const he = await Campaign.findOne({ where: { name: 'He 800 nm elliptical' } });
  if (!he) return 'demo fixity: no "He 800 nm elliptical" campaign (seed first)';
  const catalogued = randomBytes(64 * 1024);
  const stored = Buffer.from(catalogued);
  // sixteen flipped bits
  for (let i = 0; i < 16; i++) stored.writeUInt8(stored.readUInt8(4096 + i * 977) ^ 0x10, 4096 + i * 977);
  const key = `raw/demo/${PLANTED_NAME}`;
  await putObject({ bucket: buckets().raw, key, body: stored, contentLength: stored.length });
  const shift = await Shift.create({
    team_id: he.team_id,
    campaign_id: he.id,
    title: 'Archive shelf (fixity demo)',
    status: 'closed',
    opened_by: null,
    opened_at: new Date(),
    closed_by: null,
    closed_at: new Date(),
    receipt_sent_at: null,
  });
  const raw = await RawFile.create({
    team_id: he.team_id,
    sha256: createHash('sha256').update(catalogued).digest('hex'),
    bucket: buckets().raw,
    storage_key: key,
    size_bytes: catalogued.length,
    original_name: PLANTED_NAME,
    status: 'accepted',
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
  });
  await Scan.create({
    team_id: he.team_id,
    campaign_id: he.id,
    shift_id: shift.id,
    raw_file_id: raw.id,
    experiment_kind: 'angular_streaking',
    title: 'Planted corruption (fixity demo)',
    target: 'He',
    wavelength_nm: 800,
    ellipticity: null,
    helicity: null,
    step_quantity: null,
    n_steps: null,
    n_y: null,
    n_x: null,
    started_at: null,
    status: 'uploaded',
    status_message: 'Fixity demo file: its stored bytes were changed after cataloguing on purpose.',
    flag_note: null,
    latest_result_id: null,
    offset_deg: null,
    offset_err_deg: null,
    created_by: null,
  });
  return `demo fixity: planted ${PLANTED_NAME} (file ${raw.id}) in "${he.name}"; "Check 50 files now" on /stewardship/fixity catches it`;
}

if (invokedDirectly) {
  try {
    console.log(await plantDemoCorruption());
  } finally {
    const { closeSequelize } = await import('@/lib/db');
    await closeSequelize();
    const { closeS3Client } = await import('@/lib/storage/s3');
    closeS3Client();
  }
}
