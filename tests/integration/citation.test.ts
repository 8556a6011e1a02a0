// Campaign citation metadata and records (C10, issue 14) against the real MariaDB: a PI's save lands with its
// audit event; a wrong ORCID check digit (ISO 7064 MOD 11-2; ORCID's example 0000-0002-1825-0097 with its last
// digit changed) is refused naming the field and loses nothing already saved; the DataCite download answers 409
// naming the missing mandatory properties (SCIENCE.md §11.3) until they are there, then a well-formed record
// (xmllint); the embargo keeps file facts out of the record. Access per role: policy-matrix.test.ts.
import { spawnSync } from 'node:child_process';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import type { World } from './helpers/world';

vi.mock('server-only', () => ({}));

const { callRoute } = await import('./helpers/call');
const { actAs, clearSession } = await import('./helpers/session');
const { makeWorld } = await import('./helpers/world');
const { closeSequelize } = await import('@/lib/db');
const { closeReductionQueue } = await import('@/lib/queue/reduction-queue');
const { closeS3Client } = await import('@/lib/storage/s3');
const { AuditEvent, Campaign } = await import('@/models');
const citation = await import('@/app/api/campaigns/[campaignId]/citation/route');
const record = await import('@/app/api/campaigns/[campaignId]/citation/record/route');

// biome-ignore lint/suspicious/noExplicitAny: JSON read back from the API, narrowed by the assertions
type Loose = any;

let w: World;
beforeAll(async () => {
  w = await makeWorld({ data: true });
});
afterAll(async () => {
  clearSession();
  await w?.cleanup();
  await closeReductionQueue();
  closeS3Client();
  await closeSequelize();
});

const at = (campaignId: number) => ({
  path: `/api/campaigns/${campaignId}/citation`,
  params: { campaignId: String(campaignId) },
});
const put = (campaignId: number, body: unknown) => callRoute(citation.PUT, { method: 'PUT', ...at(campaignId), body });
const download = (campaignId: number, format: string) =>
  callRoute(record.GET, {
    method: 'GET',
    path: `/api/campaigns/${campaignId}/citation/record`,
    params: { campaignId: String(campaignId) },
    query: { format, download: 1 },
  });

const FULL = {
  publisher: 'Demo Lab Attosecond Facility',
  publicationYear: 2026,
  doi: 'https://doi.org/10.5555/demo-lab.matrix',
  version: '1.0',
  licence: 'CC-BY-4.0',
  description: 'Photoelectron momentum images of the demo campaign.',
  keywords: ['attoclock'],
  creators: [
    {
      nameType: 'Personal',
      givenName: 'Ada',
      familyName: 'Quill',
      orcid: '0000-0002-1825-0097',
      affiliations: [{ name: 'Demo Lab' }],
    },
  ],
  funding: [{ funderName: 'Invented Science Foundation', awardNumber: 'ISF-42' }],
  relatedIdentifiers: [{ identifier: '10.5555/demo-lab.paper', identifierType: 'DOI', relationType: 'IsSupplementTo' }],
};

describe('campaign citation metadata', () => {
  it('a PI saves it; the audit trail names the fields; completeness goes to 1 with nothing missing', async () => {
    actAs(w.users.pi);
    const before = await callRoute(citation.GET, { method: 'GET', ...at(w.campaignA) });
    expect(before.status).toBe(200);
    const r = await put(w.campaignA, FULL);
    expect(r.status).toBe(200);
    const dto = r.json as Loose;
    expect(dto.citation.doi).toBe('10.5555/demo-lab.matrix');
    expect(dto.completeness.score).toBe(1);
    expect(dto.completeness.requiredMissing).toEqual([]);
    const ev = await AuditEvent.findOne({
      where: { action: 'citation.updated', target_id: String(w.campaignA), actor_id: w.users.pi },
      order: [['id', 'DESC']],
    });
    expect(ev).not.toBeNull();
    const details = (typeof ev!.details === 'string' ? JSON.parse(ev!.details) : ev!.details) as Loose;
    expect(details.changed).toEqual(expect.arrayContaining(['doi', 'creators', 'licence']));
  });

  it('a wrong ORCID check digit is refused naming the field, and the saved metadata stays', async () => {
    actAs(w.users.steward);
    const bad = structuredClone(FULL);
    bad.creators[0]!.orcid = '0000-0002-1825-0098';
    const r = await put(w.campaignA, bad);
    expect(r.status).toBe(400);
    expect(JSON.stringify(r.json)).toContain('creators.0.orcid');
    expect(JSON.stringify(r.json)).toMatch(/check digit/);
    const after = await callRoute(citation.GET, { method: 'GET', ...at(w.campaignA) });
    expect((after.json as Loose).citation.creators[0].orcid).toBe('0000-0002-1825-0097');
  });

  it('the DataCite record waits for its mandatory properties, then downloads well-formed', async () => {
    actAs(w.users.pi);
    await put(w.campaignA, { description: 'only a description' });
    const refused = await download(w.campaignA, 'datacite-xml');
    expect(refused.status).toBe(409);
    expect(JSON.stringify(refused.json)).toMatch(/DOI.*creator.*publisher.*publication year/);
    await put(w.campaignA, FULL);
    const ok = await download(w.campaignA, 'datacite-xml');
    expect(ok.status).toBe(200);
    expect(ok.response.headers.get('content-disposition')).toMatch(
      /attachment; filename="campaign-\d+\.datacite\.xml"/,
    );
    const xml = ok.json as string;
    const lint = spawnSync('/usr/bin/xmllint', ['--noout', '-'], { input: xml, encoding: 'utf8' });
    expect(lint.stderr).toBe('');
    expect(lint.status).toBe(0);
    expect(xml).toContain('<identifier identifierType="DOI">10.5555/demo-lab.matrix</identifier>');
    expect(xml).toContain('<size>');
    const audited = await AuditEvent.count({
      where: { action: 'citation.record_downloaded', target_id: String(w.campaignA) },
    });
    expect(audited).toBeGreaterThan(0);
  });

  it('under embargo the record leaves out the files and says when they become available', async () => {
    actAs(w.users.steward);
    await put(w.campaignA, FULL);
    const campaign = await Campaign.findByPk(w.campaignA);
    const previous = campaign!.embargo_until;
    await campaign!.update({ embargo_until: '2099-01-01' });
    try {
      const j = (await download(w.campaignA, 'datacite-json')).json as Loose;
      expect(j.sizes).toEqual([]);
      expect(j.formats).toEqual([]);
      expect(j.dates).toEqual([{ date: '2099-01-01', dateType: 'Available', dateInformation: 'End of embargo' }]);
      const ld = (await download(w.campaignA, 'schema-org')).json as Loose;
      expect(ld.isAccessibleForFree).toBe(false);
      expect(ld.size).toBeUndefined();
    } finally {
      await campaign!.update({ embargo_until: previous });
    }
  });

  it("a file under an embargo of its own is left out of the campaign's file summary", async () => {
    actAs(w.users.steward);
    await put(w.campaignA, FULL);
    const before = ((await download(w.campaignA, 'datacite-json')).json as Loose).sizes as string[];
    const { RawFile, Scan } = await import('@/models');
    const scan = await Scan.findByPk(w.a.scanId);
    await RawFile.update({ embargo_until: '2099-01-01' }, { where: { id: scan!.raw_file_id } });
    try {
      const after = ((await download(w.campaignA, 'datacite-json')).json as Loose).sizes as string[];
      expect(Number.parseInt(before[0]!, 10) - Number.parseInt(after[0] ?? '0', 10)).toBe(1);
    } finally {
      await RawFile.update({ embargo_until: null }, { where: { id: scan!.raw_file_id } });
    }
  });

  it('an operator reads it but may not change it', async () => {
    actAs(w.users.operator);
    expect((await callRoute(citation.GET, { method: 'GET', ...at(w.campaignA) })).status).toBe(200);
    expect((await put(w.campaignA, FULL)).status).toBe(403);
  });
});
