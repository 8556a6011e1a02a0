// A campaign's public landing page and the audit search (C10, C13; issue 14), as their users meet them. A data
// steward publishes the page from the campaign's citation page; a signed-out browser opens the address and sees the
// citation (creators with ORCID links, licence, funding, related identifiers, the file list with SHA-256) and the
// embedded schema.org JSON-LD, which expands with the `jsonld` package to a Dataset with name and description
// (SCIENCE.md §11.4); with an embargo set the file list gives way to a sentence saying until when. An address that
// was never published is a 404. Then the PI, who leads both demo teams, finds the file's upload in the audit trail
// by the first digits of its checksum, and the publication by kind of event.
import { randomBytes } from 'node:crypto';
import { expect, test } from '@playwright/test';
import jsonld from 'jsonld';
import { recordAudit } from '@/lib/audit';
import { getDb } from '@/lib/db';
import { Campaign, RawFile, Scan, Shift } from '@/models';
import { DEMO, signIn } from './helpers/auth';

const SHOTS = '.data/test/shots';

// No network: the schema.org context URL answers with "@vocab": "https://schema.org/" (how the published context
// maps every term [memory]); any other URL is refused.
const documentLoader = async (url: string) => {
  if (url.replace(/\/$/, '') === 'https://schema.org') {
    return { contextUrl: undefined, documentUrl: url, document: { '@context': { '@vocab': 'https://schema.org/' } } };
  }
  throw new Error(`no network in tests: ${url}`);
};
const S = 'https://schema.org/';

/** A campaign of its own in the angular streaking group with one stored file, so other specs' campaigns stay as they were. */
async function freshCampaign() {
  getDb();
  const he = await Campaign.findOne({ where: { name: 'He 800 nm elliptical' } });
  const hex = randomBytes(4).toString('hex');
  const campaign = await Campaign.create({
    team_id: he!.team_id,
    name: `Kr 800 nm public record ${hex}`,
    target: 'Kr',
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
    title: 'Night shift',
    status: 'closed',
    opened_by: null,
    opened_at: new Date(),
    closed_by: null,
    closed_at: new Date(),
    receipt_sent_at: null,
  });
  const name = `kr800_public_${hex}.h5`;
  const sha256 = randomBytes(32).toString('hex');
  const raw = await RawFile.create({
    team_id: campaign.team_id,
    sha256,
    bucket: process.env.S3_BUCKET_RAW ?? 'lobeline-test-raw',
    storage_key: `raw/e2e/${name}`,
    size_bytes: 52_428_800,
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
    target: 'Kr',
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
  // what the ingest writes when an operator's upload is stored (lib/ingest/service.ts)
  await recordAudit({
    action: 'file.uploaded',
    actorEmail: DEMO.operator,
    teamId: campaign.team_id,
    targetType: 'raw_file',
    targetId: raw.id,
    details: { fileName: name, sizeBytes: 52_428_800, sha256, shiftId: shift.id, scanId: scan.id },
  });
  return { campaignId: campaign.id, name: campaign.name, fileName: name, sha256 };
}

test('steward publishes a public page; a signed-out visitor reads it; the PI searches the audit trail', async ({
  page,
  browser,
}) => {
  const c = await freshCampaign();
  await signIn(page, DEMO.steward);
  const saved = await page.request.put(`/api/campaigns/${c.campaignId}/citation`, {
    data: {
      title: 'Attoclock momentum images of krypton at 800 nm (demo lab)',
      publisher: 'Harbor Point Ultrafast Lab',
      publicationYear: 2026,
      version: '1.0',
      licence: 'CC-BY-4.0',
      description: 'Raw photoelectron momentum images of krypton in elliptically polarised 800 nm pulses (demo lab).',
      keywords: ['attoclock', 'krypton'],
      creators: [
        {
          nameType: 'Personal',
          givenName: 'Ada',
          familyName: 'Quill',
          orcid: '0000-0002-1825-0097', // ORCID's documented example iD
          affiliations: [{ name: 'Harbor Point Ultrafast Lab' }],
        },
      ],
      funding: [{ funderName: 'Invented Science Foundation', awardNumber: 'ISF-42' }],
      relatedIdentifiers: [
        { identifier: '10.5555/demo-lab.paper.9', identifierType: 'DOI', relationType: 'IsSupplementTo' },
      ],
    },
  });
  expect(saved.status()).toBe(200);

  // the steward publishes from the citation page
  await page.goto(`/campaigns/${c.campaignId}/citation`);
  const panel = page.getByTestId('landing-panel');
  await expect(panel).toContainText('Not public');
  await panel.getByRole('button', { name: 'Publish a public page' }).click();
  const dialog = page.getByRole('alertdialog');
  await expect(dialog).toContainText('Results, images and maps are never shown');
  await dialog.getByRole('button', { name: 'Publish', exact: true }).click();
  await expect(panel).toContainText('published');
  const path = await panel.getByTestId('landing-link').getAttribute('href');
  expect(path).toMatch(/^\/data\/[a-z0-9]{12}$/);
  await page.screenshot({ path: `${SHOTS}/landing-publish.png`, fullPage: true });

  // a browser that never signed in
  const anon = await browser.newContext();
  const visitor = await anon.newPage();
  const res = await visitor.goto(path!);
  expect(res?.status()).toBe(200);
  await expect(visitor).toHaveURL(new RegExp(`${path}$`)); // not sent to the sign-in page
  await expect(visitor.getByRole('heading', { level: 1 })).toHaveText(
    'Attoclock momentum images of krypton at 800 nm (demo lab)',
  );
  await expect(visitor.getByTestId('creators').getByRole('link', { name: '0000-0002-1825-0097' })).toHaveAttribute(
    'href',
    'https://orcid.org/0000-0002-1825-0097',
  );
  await expect(visitor.getByText('Invented Science Foundation, award ISF-42')).toBeVisible();
  await expect(visitor.getByRole('link', { name: 'CC-BY-4.0' })).toHaveAttribute(
    'href',
    'https://spdx.org/licenses/CC-BY-4.0.html',
  );
  const files = visitor.getByTestId('file-list');
  await expect(files).toContainText(c.fileName);
  await expect(files).toContainText(c.sha256);
  await expect(files).toContainText('50.0 MiB');
  await expect(visitor.getByTestId('cite-as')).toHaveText(
    new RegExp(
      `^Quill, Ada \\(2026\\)\\. Attoclock momentum images of krypton at 800 nm \\(demo lab\\)\\. Harbor Point Ultrafast Lab\\. Version 1\\.0\\. http\\S+${path}\\.$`,
    ),
  );
  const text = await visitor.locator('script[type="application/ld+json"]').textContent();
  const expanded = (await jsonld.expand(JSON.parse(text!) as never, {
    documentLoader: documentLoader as never,
  })) as Record<string, { '@value'?: unknown }[]>[];
  expect(expanded[0]!['@type']).toEqual([`${S}Dataset`]);
  expect(expanded[0]![`${S}name`]![0]!['@value']).toBe('Attoclock momentum images of krypton at 800 nm (demo lab)');
  expect(expanded[0]![`${S}description`]![0]!['@value']).toMatch(/krypton/);
  expect(expanded[0]![`${S}url`]![0]!['@value']).toMatch(new RegExp(`${path}$`));
  // the record downloads from the page, for anyone
  const download = visitor.waitForEvent('download');
  await visitor.getByRole('link', { name: 'schema.org Dataset (JSON-LD)' }).click();
  expect((await download).suggestedFilename()).toMatch(/^dataset-[a-z0-9]{12}\.jsonld$/);
  await visitor.screenshot({ path: `${SHOTS}/landing-public.png`, fullPage: true });

  // under embargo: the citation stays, the files give way to a sentence saying until when
  const embargo = await page.request.put(`/api/campaigns/${c.campaignId}/retention`, {
    data: { retentionUntil: null, embargoUntil: '2099-06-30', legalHold: false },
  });
  expect(embargo.status()).toBe(200);
  await visitor.reload();
  await expect(visitor.getByTestId('embargo-notice')).toContainText('under embargo until 30 Jun 2099');
  await expect(visitor.getByTestId('file-list')).toHaveCount(0);
  await expect(visitor.getByText(c.sha256)).toHaveCount(0);
  await visitor.screenshot({ path: `${SHOTS}/landing-embargo.png`, fullPage: true });

  // an address nobody published
  const missing = await visitor.goto('/data/zzzzzzzzzzzz');
  expect(missing?.status()).toBe(404);
  await anon.close();

  // the PI (of both demo teams) searches the audit trail
  await page.context().clearCookies();
  await signIn(page, DEMO.pi);
  await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Audit trail' }).click();
  await expect(page.getByRole('heading', { name: 'Audit trail' })).toBeVisible();
  await page.getByLabel('File: SHA-256').fill(c.sha256.slice(0, 10));
  await page.getByRole('button', { name: 'Search' }).click();
  const table = page.getByTestId('audit-table');
  await expect(table.locator('tbody tr')).toHaveCount(1);
  await expect(table).toContainText('File uploaded');
  await expect(table).toContainText(DEMO.operator);
  await expect(table).toContainText(c.name);
  await page.getByLabel('File: SHA-256').fill('');
  await page.getByRole('button', { name: 'Search' }).click();
  await page.getByLabel('Campaign').selectOption({ label: `Angular streaking group · ${c.name}` });
  await page.getByLabel('Kind of event').selectOption({ label: 'Citation and public page' });
  await expect(table.locator('[data-action="campaign.landing_published"]')).toHaveCount(1);
  await expect(table).toContainText(DEMO.steward);
  await page.screenshot({ path: `${SHOTS}/audit-search-pi.png`, fullPage: true });
});
