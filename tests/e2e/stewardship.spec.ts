// The data steward brings a demo campaign's citation metadata to full and downloads its DataCite record (C10,
// issue 14): the file register is one menu entry away; a mistyped ORCID iD (ORCID's documented example
// 0000-0002-1825-0097 with its check digit changed) is refused beside its field and nothing typed is lost; after the
// fix the completeness reads 100 % and the DataCite XML downloads, well-formed by Debian's xmllint, with the DOI
// and the ORCID URI in it. The campaign is the seeded "He 800 nm elliptical" (scripts/seed.ts).
import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { expect, test } from '@playwright/test';
import { DEMO, signIn } from './helpers/auth';

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

  // the change and the download are in the audit trail
  const audit = await page.request.get('/api/audit', { params: { action: 'citation.' } });
  const events = ((await audit.json()) as { events: { action: string }[] }).events.map((e) => e.action);
  expect(events).toEqual(expect.arrayContaining(['citation.updated', 'citation.record_downloaded']));
});
