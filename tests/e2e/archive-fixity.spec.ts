// The data steward archives a file and restores it from the file register, and the fixity report shows a corruption
// planted directly in the S3 store (issue 14). The worker of the test run (scripts/worker.ts) does the moves and the
// check. The file is made here in a campaign of its own, with real bytes in the store; the reference checksum is
// node:crypto's SHA-256 of those bytes (FIPS 180-4).
import { createHash, randomBytes } from 'node:crypto';
import { expect, type Page, test } from '@playwright/test';
import { getDb } from '@/lib/db';
import { headObject, putObject } from '@/lib/storage/s3';
import { Campaign, RawFile, Scan, Shift } from '@/models';
import { DEMO, signIn } from './helpers/auth';

const SHOTS = '.data/test/shots';
const sha = (b: Uint8Array) => createHash('sha256').update(b).digest('hex');

/** A stored raw file with `bytes` as its object, in a campaign of its own of the angular streaking group. */
async function demoFile(label: string, bytes: Uint8Array) {
  getDb();
  const he = await Campaign.findOne({ where: { name: 'He 800 nm elliptical' } });
  const hex = randomBytes(4).toString('hex');
  const campaign = await Campaign.create({
    team_id: he!.team_id,
    name: `Archive check ${label} ${hex}`,
    target: 'He',
    wavelength_nm: 800,
    experiment_kind: 'angular_streaking',
    description: null,
    created_by: null,
    current_calibration_id: null,
    current_settings_id: null,
    embargo_until: null,
  });
  const shift = await Shift.create({
    team_id: he!.team_id,
    campaign_id: campaign.id,
    title: 'Archive check',
    status: 'closed',
    opened_by: null,
    opened_at: new Date(),
    closed_by: null,
    closed_at: new Date(),
    receipt_sent_at: null,
  });
  const name = `${label}-${hex}.h5`;
  const bucket = process.env.S3_BUCKET_RAW ?? 'lobeline-test-raw';
  const key = `raw/e2e/${name}`;
  await putObject({ bucket, key, body: bytes, contentLength: bytes.length });
  const raw = await RawFile.create({
    team_id: campaign.team_id,
    sha256: sha(bytes),
    bucket,
    storage_key: key,
    size_bytes: bytes.length,
    original_name: name,
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
  const scan = await Scan.create({
    team_id: campaign.team_id,
    campaign_id: campaign.id,
    shift_id: shift.id,
    raw_file_id: raw.id,
    experiment_kind: 'angular_streaking',
    title: name,
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
    status_message: null,
    flag_note: null,
    latest_result_id: null,
    offset_deg: null,
    offset_err_deg: null,
    created_by: null,
  });
  return { name, bucket, key, rawFileId: raw.id, scanId: scan.id, sha256: sha(bytes) };
}

async function inStore(bucket: string, key: string): Promise<boolean> {
  try {
    await headObject(bucket, key);
    return true;
  } catch {
    return false;
  }
}

async function findInRegister(page: Page, name: string) {
  await page.goto('/stewardship');
  await page.getByLabel('Search by file name or checksum').fill(name);
  await expect(page.getByRole('heading', { name: '1 file', exact: true })).toBeVisible();
  return page.getByTestId('file-register');
}

test('steward archives a file, sees it archived, restores it', async ({ page }) => {
  test.setTimeout(120_000);
  const f = await demoFile('beam-profile', randomBytes(256 * 1024));
  await signIn(page, DEMO.steward);
  const register = await findInRegister(page, f.name);
  const state = page.getByTestId(`archive-state-${f.rawFileId}`);
  await expect(state).toHaveText('online');

  await register.getByRole('button', { name: 'Archive…' }).click();
  await expect(page.getByRole('alertdialog')).toContainText('only then is the online copy removed');
  await page.screenshot({ path: `${SHOTS}/archive-confirm.png`, fullPage: true });
  await page.getByRole('button', { name: 'Archive the file' }).click();
  // the register looks again while the job runs; the worker copies, verifies and marks
  await expect(state).toContainText('archived', { timeout: 60_000 });
  await expect(register).toContainText(process.env.S3_BUCKET_ARCHIVE ?? 'lobeline-test-archive');
  await expect(register).toContainText('GLACIER_IR');
  await page.screenshot({ path: `${SHOTS}/archive-archived.png`, fullPage: true });
  await expect.poll(() => inStore(f.bucket, f.key), { timeout: 30_000 }).toBe(false);

  // the scan cannot be reduced while its file is archived, and says so
  await page.goto(`/scans/${f.scanId}`);
  await expect(page.getByTestId('scan-archived')).toContainText('cannot be reduced until the file is restored');
  await expect(page.getByTestId('scan-archived').getByRole('button', { name: 'Restore the raw file' })).toBeVisible();
  await page.screenshot({ path: `${SHOTS}/archive-scan-notice.png`, fullPage: true });

  const again = await findInRegister(page, f.name);
  await again.getByRole('button', { name: 'Restore…' }).click();
  await page.getByRole('button', { name: 'Restore the file' }).click();
  await expect(state).toHaveText('online', { timeout: 60_000 });
  await expect.poll(() => inStore(f.bucket, f.key), { timeout: 30_000 }).toBe(true);
  await page.screenshot({ path: `${SHOTS}/archive-restored.png`, fullPage: true });

  // the campaign's retention panel shows where its files are, with the campaign-wide buttons
  const campaignId = (await Scan.findByPk(f.scanId))!.campaign_id;
  await page.goto(`/campaigns/${campaignId}/citation`);
  const panel = page.getByTestId('campaign-archive');
  await expect(panel).toContainText('1 stored file');
  await expect(panel).toContainText('1 online, 0 archived');
  await expect(panel.getByRole('button', { name: 'Archive 1 online file' })).toBeEnabled();
  await page.screenshot({ path: `${SHOTS}/archive-campaign-panel.png`, fullPage: true });

  // every state change is in the audit trail with the file's checksum
  const audit = await page.request.get('/api/audit', { params: { action: 'file.', pageSize: '200' } });
  expect(audit.ok()).toBe(true);
  const events = ((await audit.json()) as { events: { action: string; targetId?: string | null }[] }).events;
  const mine = events.filter((e) => String(e.targetId) === String(f.rawFileId)).map((e) => e.action);
  expect(mine).toEqual(
    expect.arrayContaining(['file.archive_requested', 'file.archived', 'file.restore_requested', 'file.restored']),
  );
});

test('the fixity report shows a corruption planted in the S3 store', async ({ page }) => {
  test.setTimeout(120_000);
  const f = await demoFile('planted-corruption', randomBytes(64 * 1024));
  // overwrite the object through the S3 API, bypassing Lobeline: same length, other bytes
  const other = randomBytes(64 * 1024);
  await putObject({ bucket: f.bucket, key: f.key, body: other, contentLength: other.length });

  await signIn(page, DEMO.steward);
  await page.goto('/stewardship');
  await page.getByRole('link', { name: 'Fixity report' }).click();
  await expect(page.getByRole('heading', { name: 'Fixity report' })).toBeVisible();
  await expect(page.getByTestId('fixity-coverage')).toBeVisible();

  // re-check this file now (the scheduled run would reach it within the period)
  const run = await page.request.post('/api/stewardship/fixity', { data: { rawFileIds: [f.rawFileId] } });
  expect(run.status()).toBe(202);
  const failures = page.getByTestId('fixity-failures');
  await expect
    .poll(
      async () => {
        await page.reload();
        return (await failures.textContent()) ?? '';
      },
      { timeout: 60_000, intervals: [1000] },
    )
    .toContain(f.name);
  await expect(failures).toContainText(f.sha256);
  await expect(failures).toContainText(sha(other));
  await expect(failures).toContainText('checksum differs');
  await page.screenshot({ path: `${SHOTS}/fixity-report.png`, fullPage: true });

  // flagged in the register too
  await page.goto('/stewardship');
  await page.getByLabel('Search by file name or checksum').fill(f.name);
  await expect(page.getByTestId('file-register')).toContainText('MISMATCH');
});
