// The data steward's file register (GET /api/stewardship/files; C10, issue 14) against the real MariaDB: every team's
// files, filters, sorting and paging done by the server, completeness with the missing items named (the SQL order
// agrees with the score computed from the items), archive state "live" and fixity "not yet checked" until those
// are built, and the steward's boundary: catalogue metadata only, never results, images or maps (PRODUCT.md
// "Who uses it": the steward reads metadata of every team and never results).
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import type { World } from './helpers/world';

vi.mock('server-only', () => ({}));

const { callRoute } = await import('./helpers/call');
const { actAs, clearSession } = await import('./helpers/session');
const { makeWorld } = await import('./helpers/world');
const { rawFileRow } = await import('./helpers/rows');
const { closeSequelize } = await import('@/lib/db');
const { closeReductionQueue } = await import('@/lib/queue/reduction-queue');
const { closeS3Client } = await import('@/lib/storage/s3');
const { CITATION_ITEM_COUNT, FILE_ITEM_COUNT, citationItems, fileItems } = await import('@/lib/citation/completeness');
const { EMPTY_CITATION } = await import('@/lib/citation/schema');
const { RawFile, Scan } = await import('@/models');
const register = await import('@/app/api/stewardship/files/route');
const citation = await import('@/app/api/campaigns/[campaignId]/citation/route');

// biome-ignore lint/suspicious/noExplicitAny: JSON read back from the API, narrowed by the assertions
type Loose = any;

let w: World;
const extra: number[] = [];
beforeAll(async () => {
  w = await makeWorld({ data: true });
  // Two more files in team A's campaign with sizes that sort apart, one without readable metadata.
  const a = await Scan.findByPk(w.a.scanId);
  for (const [size, name] of [
    [5_000_000, `register-big-${w.run}.h5`],
    [10, `register-tiny-${w.run}.h5`],
  ] as const) {
    const raw = await RawFile.create(rawFileRow(w.teamA, { size_bytes: size, original_name: name }));
    const s = await Scan.create({ ...a!.get({ plain: true }), id: undefined as never, raw_file_id: raw.id });
    extra.push(raw.id, s.id);
  }
});
afterAll(async () => {
  clearSession();
  await w?.cleanup();
  await closeReductionQueue();
  closeS3Client();
  await closeSequelize();
});

const list = (query: Record<string, string | number> = {}) =>
  callRoute(register.GET, { method: 'GET', path: '/api/stewardship/files', query });

describe('the steward file register', () => {
  it('counts its items as lib/citation/completeness.ts does (the SQL score uses these counts)', () => {
    expect(citationItems(EMPTY_CITATION)).toHaveLength(CITATION_ITEM_COUNT);
    expect(fileItems(null)).toHaveLength(FILE_ITEM_COUNT);
  });

  it('lists files of every team with checksum, size, storage, retention, embargo, archive state and fixity', async () => {
    actAs(w.users.steward);
    const r = await list({ pageSize: 100, scopes: 1 });
    expect(r.status).toBe(200);
    const j = r.json as Loose;
    const teams = new Set(j.rows.map((x: Loose) => x.teamId));
    expect(teams.has(w.teamA)).toBe(true);
    expect(teams.has(w.teamB)).toBe(true);
    const mine = j.rows.find((x: Loose) => x.campaignId === w.campaignA);
    expect(mine.sha256).toMatch(/^[0-9a-f]{64}$/);
    expect(mine.sizeBytes).toBeGreaterThan(0);
    expect(mine.storageClass).toBe('STANDARD');
    expect(mine.bucket).toBeTruthy();
    expect(mine.archiveState).toBe('online');
    expect(mine.lastFixityAt).toBeNull();
    expect(j.teams.length).toBeGreaterThanOrEqual(2);
  });

  it('filters by team and by checksum prefix, pages and sorts on the server', async () => {
    actAs(w.users.steward);
    const onlyA = (await list({ teamId: w.teamA, pageSize: 100 })).json as Loose;
    expect(onlyA.rows.every((x: Loose) => x.teamId === w.teamA)).toBe(true);
    const target = onlyA.rows[0];
    const bySha = (await list({ q: target.sha256.slice(0, 12) })).json as Loose;
    expect(bySha.total).toBe(1);
    expect(bySha.rows[0].id).toBe(target.id);
    const asc = (await list({ campaignId: w.campaignA, sort: 'size', dir: 'asc', pageSize: 100 })).json as Loose;
    const sizes = asc.rows.map((x: Loose) => x.sizeBytes);
    expect(sizes).toEqual([...sizes].sort((p: number, q: number) => p - q));
    expect(asc.total).toBe(3);
    const page2 = (await list({ campaignId: w.campaignA, sort: 'size', dir: 'asc', pageSize: 5, page: 1 }))
      .json as Loose;
    expect(page2.rows.length).toBe(3);
    const bad = await list({ sort: 'secret' });
    expect(bad.status).toBe(400);
  });

  it('names the missing items and sorts by completeness in agreement with the score', async () => {
    actAs(w.users.pi);
    await callRoute(citation.PUT, {
      method: 'PUT',
      path: `/api/campaigns/${w.campaignA}/citation`,
      params: { campaignId: String(w.campaignA) },
      body: {
        publisher: 'Demo Lab Attosecond Facility',
        publicationYear: 2026,
        doi: '10.5555/demo-lab.register',
        licence: 'CC0-1.0',
        description: 'Register test campaign.',
        creators: [{ familyName: 'Quill', givenName: 'Ada', orcid: '0000-0002-1825-0097' }],
      },
    });
    actAs(w.users.steward);
    const j = (await list({ campaignId: w.campaignA, sort: 'completeness', dir: 'desc', pageSize: 100 })).json as Loose;
    const scores = j.rows.map((x: Loose) => x.completeness.score);
    expect(scores).toEqual([...scores].sort((p: number, q: number) => q - p));
    const noMeta = j.rows.find((x: Loose) => x.fileName.startsWith('register-big-'));
    expect(noMeta.completeness.requiredMissing).toEqual(['readable file metadata']);
    expect(noMeta.completeness.recommendedMissing).toEqual(
      expect.arrayContaining(['affiliation of every creator', 'keywords', 'funding', 'file title']),
    );
    // 6 required citation items + ORCID of every person = 7 of 21 items for a file without metadata
    expect(noMeta.completeness.score).toBeCloseTo(7 / 21, 12);
    const incomplete = (await list({ campaignId: w.campaignA, completeness: 'incomplete', pageSize: 100 }))
      .json as Loose;
    expect(incomplete.total).toBe(3);
    expect((await list({ campaignId: w.campaignA, completeness: 'complete' })).json).toMatchObject({ total: 0 });
  });

  it('shows metadata only: no result, image or map field, and the result routes refuse the steward', async () => {
    actAs(w.users.steward);
    const keys = new Set<string>();
    const walk = (v: unknown) => {
      if (Array.isArray(v)) v.forEach(walk);
      else if (v && typeof v === 'object') {
        for (const [k, x] of Object.entries(v)) {
          keys.add(k.toLowerCase());
          walk(x);
        }
      }
    };
    walk((await list({ pageSize: 100 })).json);
    expect(keys.has('sha256')).toBe(true);
    for (const word of ['offset', 'result', 'image', 'lobe', 'phase', 'counts', 'calibration', 'metadata']) {
      expect(
        [...keys].filter((k) => k.includes(word)),
        word,
      ).toEqual([]);
    }
    const scanRoutes = ['result', 'image', 'curves', 'download/json', 'download/csv', 'download/h5'];
    for (const rest of scanRoutes) {
      const mod = (await import(`@/app/api/scans/[scanId]/${rest}/route`)) as Record<string, Loose>;
      const r = await callRoute(mod.GET, {
        method: 'GET',
        path: `/api/scans/${w.a.scanId}/${rest}`,
        params: { scanId: String(w.a.scanId) },
      });
      expect(r.status, rest).toBe(403);
    }
  });

  it("shows the campaign's retention where the file has none, holds and pending deletions, and filters by them", async () => {
    const { Campaign, DeletionRequest } = await import('@/models');
    await Campaign.update({ retention_until: '2031-03-31', legal_hold: true }, { where: { id: w.campaignA } });
    const bigId = extra[0]!;
    await RawFile.update({ retention_until: '2020-01-01' }, { where: { id: bigId } });
    const req = await DeletionRequest.create({
      raw_file_id: bigId,
      requested_by: w.users.steward,
      confirmed_by: null,
      reason: 'register test',
      confirmed_at: null,
      cancelled_at: null,
    });
    try {
      actAs(w.users.steward);
      const j = (await list({ campaignId: w.campaignA, pageSize: 100 })).json as Loose;
      const big = j.rows.find((x: Loose) => x.id === bigId);
      expect(big).toMatchObject({ retentionUntil: '2020-01-01', retentionOwn: true, legalHold: true });
      expect(big.deletion).toEqual({ requestId: req.id, state: 'waiting' });
      const tiny = j.rows.find((x: Loose) => x.id === extra[2]);
      expect(tiny).toMatchObject({ retentionUntil: '2031-03-31', retentionOwn: false, deletion: null });
      const pending = (await list({ hold: 'deletion', pageSize: 100 })).json as Loose;
      expect(pending.rows.map((x: Loose) => x.id)).toContain(bigId);
      expect(pending.rows.map((x: Loose) => x.id)).not.toContain(extra[2]);
      const held = (await list({ hold: 'held', teamId: w.teamB, pageSize: 100 })).json as Loose;
      expect(held.total).toBe(0);
    } finally {
      await req.update({ cancelled_at: new Date() });
      await Campaign.update({ retention_until: null, legal_hold: false }, { where: { id: w.campaignA } });
    }
  });

  it('is the steward’s alone: team roles and the admin are refused', async () => {
    for (const who of ['operator', 'analyst', 'pi', 'admin'] as const) {
      actAs(w.users[who]);
      expect((await list()).status, who).toBe(403);
    }
  });
});
