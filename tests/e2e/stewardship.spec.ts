// The data steward brings a demo campaign's citation metadata to full and downloads its DataCite record (C10,
// issue 14): the file register is one menu entry away; a mistyped ORCID iD (ORCID's documented example
// 0000-0002-1825-0097 with its check digit changed) is refused beside its field and nothing typed is lost; after the
// fix the completeness reads 100 % and the DataCite XML downloads, well-formed by Debian's xmllint, with the DOI
// and the ORCID URI in it. The campaign is the seeded "He 800 nm elliptical" (scripts/seed.ts).
import { spawnSync } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { expect, test } from '@playwright/test';
import { getDb } from '@/lib/db';
import { Campaign, RawFile, Scan, Shift } from '@/models';
import { DEMO, signIn, signOut } from './helpers/auth';

const SHOTS = '.data/test/shots';

test('steward: file register, citation metadata to full, DataCite XML download', async ({ page }) => {
  await signIn(page, DEMO.steward);
  await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'File register' }).click();
  await expect(page.getByRole('heading', { name: 'File register' })).toBeVisible();
  await expect(page.getByTestId('file-register')).toBeVisible();
  await page.screenshot({ path: `${SHOTS}/steward-file-register.png`, fullPage: true });

  // the seeded campaign, found through the API the steward reads; its citation metadata starts empty
  const list = await page.request.get('/api/campaigns?scope=all');
  expect(list.ok()).toBe(true);
  const campaigns = ((await list.json()) as { campaigns: { id: number; name: string }[] }).campaigns;
  const he = campaigns.find((c) => c.name === 'He 800 nm elliptical');
  expect(he, 'seeded campaign').toBeDefined();
  const reset = await page.request.put(`/api/campaigns/${he!.id}/citation`, { data: {} });
  expect(reset.status()).toBe(200);

  await page.goto(`/campaigns/${he!.id}`);
  await page.getByRole('link', { name: 'Citation record' }).click();
  await expect(page.getByRole('heading', { name: 'Citation record' })).toBeVisible();
  await expect(page.getByTestId('citation-completeness')).toContainText('0 %');

  const form = page.getByRole('form', { name: 'Citation metadata' });
  await form.getByLabel('DOI').fill('https://doi.org/10.5555/demo-lab.he800');
  await form.getByLabel('Version').fill('1.0');
  await form.getByLabel('Publisher').fill('Demo Lab Attosecond Facility');
  await form.getByLabel('Publication year').fill('2026');
  await form.getByLabel('Licence (SPDX identifier)').fill('CC-BY-4.0');
  await form.getByLabel('Keywords').fill('attoclock, helium, elliptical light');
  await form
    .getByLabel('Description')
    .fill('Photoelectron momentum images of helium in elliptically polarised 800 nm pulses (demo lab).');
  await form.getByRole('button', { name: 'Add a creator' }).click();
  const creator = form.getByTestId('creator-row').first();
  await creator.getByLabel('Given name').fill('Ada');
  await creator.getByLabel('Family name').fill('Quill');
  await creator.getByLabel('ORCID iD').fill('0000-0002-1825-0098');
  await creator.getByLabel('Affiliations').fill('Demo Lab, Institute of Invented Physics');
  await form.getByRole('button', { name: 'Add funding' }).click();
  await form.getByLabel('Funder', { exact: true }).fill('Invented Science Foundation');
  await form.getByLabel('Award number').fill('ISF-42');
  await form.getByRole('button', { name: 'Add an identifier' }).click();
  await form.getByLabel('Identifier', { exact: true }).fill('10.5555/demo-lab.paper.7');
  await form.getByRole('button', { name: 'Save citation metadata' }).click();

  // the wrong check digit is named beside the field; the rest of the form keeps what was typed
  await expect(creator.getByTestId('field-error')).toContainText('check digit');
  await expect(form.getByLabel('Publisher')).toHaveValue('Demo Lab Attosecond Facility');
  await page.screenshot({ path: `${SHOTS}/citation-orcid-refused.png`, fullPage: true });

  await creator.getByLabel('ORCID iD').fill('https://orcid.org/0000-0002-1825-0097');
  await form.getByRole('button', { name: 'Save citation metadata' }).click();
  await expect(page.getByRole('status')).toHaveText('Saved.');
  await expect(page.getByTestId('citation-completeness')).toContainText('100 %');
  await expect(page.getByTestId('citation-completeness')).toContainText('Everything a citation needs is here');
  await expect(creator.getByLabel('ORCID iD')).toHaveValue('0000-0002-1825-0097');
  await expect(form.getByLabel('DOI')).toHaveValue('10.5555/demo-lab.he800');
  await page.screenshot({ path: `${SHOTS}/citation-full.png`, fullPage: true });

  const downloading = page.waitForEvent('download');
  await page.getByRole('link', { name: 'DataCite XML' }).click();
  const download = await downloading;
  expect(download.suggestedFilename()).toBe(`campaign-${he!.id}.datacite.xml`);
  const file = await download.path();
  const lint = spawnSync('/usr/bin/xmllint', ['--noout', file], { encoding: 'utf8' });
  expect(lint.stderr).toBe('');
  expect(lint.status).toBe(0);
  const xml = readFileSync(file, 'utf8');
  expect(xml).toContain('xmlns="http://datacite.org/schema/kernel-4"');
  expect(xml).toContain('<identifier identifierType="DOI">10.5555/demo-lab.he800</identifier>');
  expect(xml).toContain('https://orcid.org/0000-0002-1825-0097');
  expect(xml).toContain('<resourceType resourceTypeGeneral="Dataset">');

  // an embargo set here keeps the files out of the records and says when they become available
  const retention = page.getByTestId('campaign-retention');
  await retention.getByLabel('Embargo until').fill('2099-06-30');
  await retention.getByRole('button', { name: 'Save retention' }).click();
  await expect(retention.getByText('Saved.')).toBeVisible();
  await expect(page.getByText('Under embargo until 2099-06-30')).toBeVisible();
  await page.screenshot({ path: `${SHOTS}/citation-embargo.png`, fullPage: true });
  const json = await page.request.get(`/api/campaigns/${he!.id}/citation/record`, {
    params: { format: 'datacite-json' },
  });
  const record = (await json.json()) as { sizes: string[]; dates: { date: string; dateType: string }[] };
  expect(record.sizes).toEqual([]);
  expect(record.dates).toEqual([expect.objectContaining({ date: '2099-06-30', dateType: 'Available' })]);
  await retention.getByLabel('Embargo until').fill('');
  await retention.getByRole('button', { name: 'Save retention' }).click();
  await expect(page.getByText('Under embargo until')).toHaveCount(0);

  // the change and the download are in the audit trail
  const audit = await page.request.get('/api/audit', { params: { action: 'citation.' } });
  const events = ((await audit.json()) as { events: { action: string }[] }).events.map((e) => e.action);
  expect(events).toEqual(expect.arrayContaining(['citation.updated', 'citation.record_downloaded']));
});

// Two people delete a file: the steward asks in the register, the PI of the team confirms on the deletions page
// (issue 14: "a PI cannot delete anything alone"; the server-side rules are in tests/integration/deletion.test.ts).
// The file is a catalogue row made here, kept until 2020-01-01, so it may be deleted.
test('steward asks to delete a file past its retention, the PI confirms it', async ({ page }) => {
  getDb();
  // a campaign of its own in the angular streaking group, so the seeded campaigns other specs use stay as they were
  const he = await Campaign.findOne({ where: { name: 'He 800 nm elliptical' } });
  const hex = randomBytes(4).toString('hex');
  const campaign = await Campaign.create({
    team_id: he!.team_id,
    name: `Retired alignment runs ${hex}`,
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
    title: 'Alignment',
    status: 'closed',
    opened_by: null,
    opened_at: new Date(),
    closed_by: null,
    closed_at: new Date(),
    receipt_sent_at: null,
  });
  const name = `old-alignment-run-${hex}.h5`;
  const raw = await RawFile.create({
    team_id: campaign.team_id,
    sha256: randomBytes(32).toString('hex'),
    bucket: process.env.S3_BUCKET_RAW ?? 'lobeline-test-raw',
    storage_key: `raw/e2e/${name}`,
    size_bytes: 1234,
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
    retention_until: '2020-01-01',
    last_fixity_at: null,
    last_fixity_ok: null,
    deleted_at: null,
  });
  await Scan.create({
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

  await signIn(page, DEMO.steward);
  await page.goto('/stewardship');
  await page.getByLabel('Search by file name or checksum').fill(name);
  const register = page.getByTestId('file-register');
  // the server answers the search with this one file
  await expect(page.getByRole('heading', { name: '1 file', exact: true })).toBeVisible();
  await expect(register.getByText(name)).toBeVisible();
  await expect(register).toContainText('1 Jan 2020');
  await register.getByRole('button', { name: 'Ask to delete…' }).click();
  const dialog = page.getByRole('alertdialog');
  await expect(dialog).toContainText('cannot be undone');
  await dialog.getByLabel('Reason (kept in the audit trail)').fill('Alignment run, superseded; past its retention.');
  await dialog.getByRole('button', { name: 'Ask for deletion' }).click();
  await expect(register).toContainText('deletion asked');
  await page.screenshot({ path: `${SHOTS}/steward-deletion-asked.png`, fullPage: true });
  await signOut(page);

  await signIn(page, DEMO.pi);
  await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Deletions' }).click();
  const queue = page.getByTestId('deletion-queue');
  const item = queue.getByRole('listitem').filter({ hasText: name });
  await expect(item).toContainText('Alignment run, superseded');
  await page.screenshot({ path: `${SHOTS}/pi-deletion-queue.png`, fullPage: true });
  await item.getByRole('button', { name: 'Confirm deletion' }).click();
  await expect(page.getByRole('alertdialog')).toContainText('This cannot be undone.');
  await page.getByRole('alertdialog').getByRole('button', { name: 'Delete the stored file' }).click();
  await expect(queue.getByText(name)).toHaveCount(0);
  await raw.reload();
  expect(raw.deleted_at).not.toBeNull();
});
