// Public landing pages of campaigns (C10, issue 14) against the real MariaDB. Nothing is public by default: an
// unpublished campaign's page and records are a 404 for a signed-out visitor. A PI or a data steward publishes
// (audited), an operator may not. The rendered page embeds a schema.org Dataset that expands with the `jsonld`
// package and carries SCIENCE.md §11.4's properties; under embargo it names the dataset and hides the file list,
// after the embargo it lists the files with size and SHA-256. No result value of the campaign appears on it.

import jsonld from 'jsonld';
import { renderToStaticMarkup } from 'react-dom/server';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import type { TeamData, World } from './helpers/world';

vi.mock('server-only', () => ({}));

const { callRoute } = await import('./helpers/call');
const { actAs, clearSession } = await import('./helpers/session');
const { makeWorld } = await import('./helpers/world');
const { closeSequelize } = await import('@/lib/db');
const { closeReductionQueue } = await import('@/lib/queue/reduction-queue');
const { closeS3Client } = await import('@/lib/storage/s3');
const { AuditEvent, Campaign, RawFile, Scan } = await import('@/models');
const citation = await import('@/app/api/campaigns/[campaignId]/citation/route');
const landing = await import('@/app/api/campaigns/[campaignId]/landing/route');
const record = await import('@/app/api/public/landing/[publicId]/record/route');
const page = await import('@/app/data/[publicId]/page');

// biome-ignore lint/suspicious/noExplicitAny: JSON read back from the API, narrowed by the assertions
type Loose = any;

let w: World;
let campaignId: number;
let fileSha: string;
let fileName: string;
beforeAll(async () => {
  w = await makeWorld({ data: false });
  campaignId = w.campaignA;
  const scanId = await w.freshScan({ teamId: w.teamA, campaignId, shiftId: w.shiftA } as TeamData);
  const scan = await Scan.findByPk(scanId);
  // A result value that must never reach the public page (the scan's fitted offset).
  await scan!.update({ offset_deg: 7.3141 });
  const raw = await RawFile.findByPk(scan!.raw_file_id);
  fileSha = raw!.sha256;
  fileName = raw!.original_name;
});
afterAll(async () => {
  clearSession();
  await w?.cleanup();
  await closeReductionQueue();
  closeS3Client();
  await closeSequelize();
});

const FULL = {
  title: 'Attoclock momentum images of argon at 800 nm (demo lab)',
  publisher: 'Harbor Point Ultrafast Lab',
  publicationYear: 2026,
  version: '1.0',
  licence: 'CC-BY-4.0',
  description: 'Raw photoelectron momentum images of the demo campaign, HDF5/NeXus.',
  keywords: ['attoclock', 'strong-field ionization'],
  creators: [
    {
      nameType: 'Personal',
      givenName: 'Ada',
      familyName: 'Quill',
      // ORCID's documented example iD (check digit valid under ISO 7064 MOD 11-2)
      orcid: '0000-0002-1825-0097',
      affiliations: [{ name: 'Harbor Point Ultrafast Lab' }],
    },
  ],
  funding: [{ funderName: 'Invented Science Foundation', awardNumber: 'ISF-42' }],
  relatedIdentifiers: [{ identifier: '10.5555/demo-lab.paper', identifierType: 'DOI', relationType: 'IsSupplementTo' }],
};

const at = (id: number) => ({ path: `/api/campaigns/${id}/landing`, params: { campaignId: String(id) } });
const publish = (id: number, published: boolean) =>
  callRoute(landing.PUT, { method: 'PUT', ...at(id), body: { published } });
const publicRecord = (publicId: string, format = 'schema-org') =>
  callRoute(record.GET, {
    method: 'GET',
    path: `/api/public/landing/${publicId}/record`,
    params: { publicId },
    query: { format },
  });

/** The page as the server renders it, or the digest of the Next error it threw (notFound → NEXT_HTTP_ERROR_FALLBACK;404). */
async function render(publicId: string): Promise<{ html: string } | { digest: string }> {
  try {
    const tree = await page.default({ params: Promise.resolve({ publicId }) });
    return { html: renderToStaticMarkup(tree) };
  } catch (err) {
    return { digest: String((err as { digest?: string }).digest ?? err) };
  }
}

// No network: the schema.org context URL answers with "@vocab": "https://schema.org/" (how the published context
// maps every term [memory]); any other URL is refused.
const documentLoader = async (url: string) => {
  if (url.replace(/\/$/, '') === 'https://schema.org') {
    return { contextUrl: undefined, documentUrl: url, document: { '@context': { '@vocab': 'https://schema.org/' } } };
  }
  throw new Error(`no network in tests: ${url}`);
};
const S = 'https://schema.org/';

function jsonLdOf(html: string): unknown {
  const m = html.match(/<script type="application\/ld\+json"[^>]*>([\s\S]*?)<\/script>/);
  expect(m, 'a JSON-LD script element').not.toBeNull();
  return JSON.parse(m![1]!);
}

let publicId = '';

describe('public landing page', () => {
  it('is not public by default: the state says so and a made-up address is a 404', async () => {
    actAs(w.users.pi);
    const r = await callRoute(landing.GET, { method: 'GET', ...at(campaignId) });
    expect(r.status).toBe(200);
    expect((r.json as Loose).landing).toMatchObject({ published: false, publicId: null });
    clearSession();
    actAs(null);
    expect((await publicRecord('abcdefabcdef')).status).toBe(404);
    expect(await render('abcdefabcdef')).toEqual({ digest: 'NEXT_HTTP_ERROR_FALLBACK;404' });
  });

  it('publishing needs the citation essentials, and an operator may not publish', async () => {
    actAs(w.users.pi);
    const early = await publish(campaignId, true);
    expect(early.status).toBe(409);
    expect((early.json as Loose).error.message).toMatch(/at least one creator/);
    expect(
      (
        await callRoute(citation.PUT, {
          method: 'PUT',
          path: `/api/campaigns/${campaignId}/citation`,
          params: { campaignId: String(campaignId) },
          body: FULL,
        })
      ).status,
    ).toBe(200);
    actAs(w.users.operator);
    expect((await publish(campaignId, true)).status).toBe(403);
  });

  it('a PI publishes; the event is audited; a signed-out visitor reads the page and the record', async () => {
    actAs(w.users.pi);
    const r = await publish(campaignId, true);
    expect(r.status).toBe(200);
    const state = (r.json as Loose).landing;
    expect(state.published).toBe(true);
    expect(state.publicId).toMatch(/^[a-z0-9]{12}$/);
    publicId = state.publicId;
    const ev = await AuditEvent.findOne({
      where: { action: 'campaign.landing_published', target_id: String(campaignId) },
    });
    expect(ev?.actor_id).toBe(w.users.pi);
    expect(ev?.campaign_id).toBe(campaignId);

    actAs(null);
    const rec = await publicRecord(publicId);
    expect(rec.status).toBe(200);
    expect((rec.json as Loose).url).toBe(`${process.env.APP_ORIGIN}/data/${publicId}`);
    // No DOI yet: the DataCite record is refused with the missing property named, not served half-empty.
    const dc = await publicRecord(publicId, 'datacite-xml');
    expect(dc.status).toBe(409);
    expect((dc.json as Loose).error.message).toMatch(/DOI/);
  });

  it('the rendered page embeds JSON-LD that expands to a schema.org Dataset with §11.4 properties', async () => {
    actAs(null);
    const out = await render(publicId);
    expect('html' in out).toBe(true);
    const html = (out as { html: string }).html;
    const expanded = (await jsonld.expand(jsonLdOf(html) as never, {
      documentLoader: documentLoader as never,
    })) as Record<string, Loose>[];
    expect(expanded).toHaveLength(1);
    const d = expanded[0]!;
    expect(d['@type']).toEqual([`${S}Dataset`]);
    // name and description: required by the dataset guidance SCIENCE.md §11.4 summarises
    expect(d[`${S}name`][0]['@value']).toBe(FULL.title);
    expect(d[`${S}description`][0]['@value']).toBe(FULL.description);
    // recommended properties this campaign fills (SCIENCE.md §11.4)
    for (const p of ['url', 'version', 'keywords', 'license', 'creator', 'isAccessibleForFree']) {
      expect(d[`${S}${p}`], p).toBeDefined();
    }
    expect(d[`${S}url`][0]['@value']).toBe(`${process.env.APP_ORIGIN}/data/${publicId}`);
    expect(d[`${S}license`][0]['@value']).toBe('https://spdx.org/licenses/CC-BY-4.0.html');
    const person = d[`${S}creator`][0];
    expect(person[`${S}identifier`][0]['@value']).toBe('https://orcid.org/0000-0002-1825-0097');
    // What a citation needs is on the page itself, with the ORCID as a link
    expect(html).toContain('href="https://orcid.org/0000-0002-1825-0097"');
    expect(html).toContain('Invented Science Foundation');
    expect(html).toContain('https://doi.org/10.5555/demo-lab.paper');
    // No embargo: the file list with size and checksum
    expect(html).toContain(fileSha);
    expect(html).toContain(fileName);
    // Never a result: the scan's fitted offset is nowhere on the page
    expect(html).not.toMatch(/7\.31/);
  });

  it('under embargo the page names the dataset, says until when, and hides the files', async () => {
    await Campaign.update({ embargo_until: '2099-06-30' }, { where: { id: campaignId } });
    actAs(null);
    const out = await render(publicId);
    const html = (out as { html: string }).html;
    expect(html).toContain(FULL.title);
    expect(html).toContain('under embargo until 30 Jun 2099');
    expect(html).not.toContain(fileSha);
    expect(html).not.toContain(fileName);
    const d = jsonLdOf(html) as Loose;
    expect(d.isAccessibleForFree).toBe(false);
    expect(d.size).toBeUndefined();
    await Campaign.update({ embargo_until: null }, { where: { id: campaignId } });
  });

  it('a data steward withdraws it: the address answers 404 again, and is kept for a later publication', async () => {
    actAs(w.users.steward);
    const r = await publish(campaignId, false);
    expect(r.status).toBe(200);
    expect((r.json as Loose).landing).toMatchObject({ published: false, publicId });
    actAs(null);
    expect((await publicRecord(publicId)).status).toBe(404);
    expect(await render(publicId)).toEqual({ digest: 'NEXT_HTTP_ERROR_FALLBACK;404' });
    actAs(w.users.steward);
    expect(((await publish(campaignId, true)).json as Loose).landing.publicId).toBe(publicId);
    const withdrawn = await AuditEvent.count({
      where: { action: 'campaign.landing_withdrawn', actor_id: w.users.steward },
    });
    expect(withdrawn).toBe(1);
  });
});
