// The campaign scan table API (GET /api/campaigns/[id]/scans) against the real MariaDB: server-side paging,
// sorting and filtering, checked against the rows this test inserted (the expected orderings are computed here
// independently with Array.prototype.sort), and access for members, outsiders, stewards and signed-out callers.
import { randomBytes } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';

// The data layer is marked server-only for Next; in vitest it is plain Node.
vi.mock('server-only', () => ({}));

import { GET as getScans } from '@/app/api/campaigns/[campaignId]/scans/route';
import { setSessionSourceForTests } from '@/lib/auth/session-source';
import { getDb } from '@/lib/db';
import { closeSequelize } from '@/lib/db/client';
import type { ScanStatus } from '@/models';
import { Campaign, FacilityRoleGrant, Membership, RawFile, Scan, Shift, Team, User } from '@/models';
import { rawFileRow } from './helpers/rows';

const tag = randomBytes(4).toString('hex');
let campaignId = 0;
let shiftIds: number[] = [];
const users: Record<'analyst' | 'outsider' | 'steward', number> = { analyst: 0, outsider: 0, steward: 0 };
interface Row {
  id: number;
  title: string;
  status: ScanStatus;
  target: string;
  offset: number | null;
  flagged: boolean;
  shiftId: number;
}
const inserted: Row[] = [];
const STATUSES: ScanStatus[] = ['reduced', 'reduced', 'failed', 'queued', 'uploaded', 'reduced'];

async function call(as: keyof typeof users | null, query: string, id = campaignId) {
  setSessionSourceForTests(async () => (as ? { userId: users[as] } : null));
  const res = await getScans(new Request(`http://127.0.0.1/api/campaigns/${id}/scans?${query}`), {
    params: Promise.resolve({ campaignId: String(id) }),
  });
  return {
    status: res.status,
    body: (await res.json()) as Record<string, unknown> & { rows: Record<string, unknown>[]; total: number },
  };
}

beforeAll(async () => {
  getDb();
  const team = await Team.create({ slug: `sa-${tag}`, name: `Scan API team ${tag}`, description: null });
  const other = await Team.create({ slug: `sb-${tag}`, name: `Other team ${tag}`, description: null });
  const mk = (n: string) =>
    User.create({
      email: `${n}-${tag}@harbor-point.example`,
      name: n,
      password_hash: null,
      notification_prefs: null,
      last_sign_in_at: null,
    });
  const [a, o, s] = await Promise.all([mk('analyst'), mk('outsider'), mk('steward')]);
  users.analyst = a.id;
  users.outsider = o.id;
  users.steward = s.id;
  await Membership.create({ user_id: a.id, team_id: team.id, role: 'analyst' });
  await Membership.create({ user_id: o.id, team_id: other.id, role: 'pi' });
  await FacilityRoleGrant.create({ user_id: s.id, role: 'steward' } as never);
  const c = await Campaign.create({
    team_id: team.id,
    name: `Table ${tag}`,
    target: 'Ne',
    wavelength_nm: 1300,
    experiment_kind: 'angular_streaking',
    description: null,
    created_by: a.id,
    current_calibration_id: null,
    current_settings_id: null,
    embargo_until: null,
  });
  campaignId = c.id;
  const shifts = await Promise.all(
    ['Morning', 'Evening'].map((t) =>
      Shift.create({
        team_id: team.id,
        campaign_id: c.id,
        title: t,
        opened_by: a.id,
        opened_at: new Date(),
        closed_by: null,
        closed_at: null,
        receipt_sent_at: null,
      }),
    ),
  );
  shiftIds = shifts.map((x) => x.id);
  for (let i = 0; i < 30; i++) {
    const raw = await RawFile.create(
      rawFileRow(team.id, {
        bucket: 'b',
        storage_key: `raw/${tag}/${i}.h5`,
        size_bytes: 1000 + i,
        original_name: i % 5 === 0 ? `needle_${i}.h5` : `scan_${i}.h5`,
        uploaded_by: a.id,
      }),
    );
    const status = STATUSES[i % STATUSES.length] as ScanStatus;
    const offset = status === 'reduced' ? Math.round(((i * 37) % 23) * 10) / 10 - 5 : null;
    const row: Row = {
      id: 0,
      title: `Ne scan ${String(i).padStart(2, '0')}`,
      status,
      target: i % 3 === 0 ? 'Ar' : 'Ne',
      offset,
      flagged: i % 7 === 0,
      shiftId: shiftIds[i % 2] as number,
    };
    const scan = await Scan.create({
      team_id: team.id,
      campaign_id: c.id,
      shift_id: row.shiftId,
      raw_file_id: raw.id,
      experiment_kind: 'angular_streaking',
      title: row.title,
      target: row.target,
      wavelength_nm: 1300,
      ellipticity: 0.9,
      helicity: 1,
      step_quantity: 'intensity',
      n_steps: 1 + (i % 4),
      n_y: 64,
      n_x: 64,
      started_at: new Date(Date.UTC(2026, 10, 1, 0, i)),
      status,
      status_message: null,
      flagged: row.flagged,
      flag_note: null,
      latest_result_id: null,
      offset_deg: offset,
      offset_err_deg: offset === null ? null : 0.2,
      created_by: a.id,
    });
    row.id = scan.id;
    inserted.push(row);
  }
});

afterAll(async () => {
  setSessionSourceForTests(null);
  await closeSequelize();
});

describe('GET /api/campaigns/[id]/scans', () => {
  it('pages on the server: pages are disjoint, sized as asked, and together give every scan once', async () => {
    const seen: number[] = [];
    for (let page = 1; page <= 4; page++) {
      const r = await call('analyst', `page=${page}&pageSize=8&sort=id&dir=asc`);
      expect(r.status).toBe(200);
      expect(r.body.total).toBe(30);
      expect(r.body.rows).toHaveLength(page < 4 ? 8 : 6);
      seen.push(...r.body.rows.map((x) => x.id as number));
    }
    expect(seen).toEqual(inserted.map((x) => x.id).sort((a, b) => a - b));
  });

  it('sorts by offset (nulls last) and by title in both directions', async () => {
    const r = await call('analyst', 'pageSize=200&sort=offset&dir=asc');
    const offsets = r.body.rows.map((x) => x.offsetDeg as number | null);
    const expected = inserted.map((x) => x.offset).sort((a, b) => (a === null ? 1 : b === null ? -1 : a - b));
    expect(offsets).toEqual(expected);
    const d = await call('analyst', 'pageSize=5&sort=title&dir=desc');
    expect(d.body.rows.map((x) => x.title)).toEqual(
      inserted
        .map((x) => x.title)
        .sort()
        .reverse()
        .slice(0, 5),
    );
  });

  it('filters by state, target, shift, flag and text, with the total of the filter', async () => {
    const failed = await call('analyst', 'status=failed&pageSize=100');
    expect(failed.body.total).toBe(inserted.filter((x) => x.status === 'failed').length);
    expect(failed.body.rows.every((x) => x.status === 'failed')).toBe(true);
    const two = await call('analyst', 'status=queued,uploaded&pageSize=100');
    expect(two.body.total).toBe(inserted.filter((x) => x.status === 'queued' || x.status === 'uploaded').length);
    const ar = await call('analyst', 'target=Ar&pageSize=100');
    expect(ar.body.total).toBe(inserted.filter((x) => x.target === 'Ar').length);
    const shift = await call('analyst', `shift=${shiftIds[1]}&flagged=true&pageSize=100`);
    expect(shift.body.total).toBe(inserted.filter((x) => x.shiftId === shiftIds[1] && x.flagged).length);
    const q = await call('analyst', 'q=needle&pageSize=100');
    expect(q.body.total).toBe(6); // file names needle_0, _5, _10, _15, _20, _25
    expect(q.body.rows.every((x) => String(x.fileName).startsWith('needle_'))).toBe(true);
    const pct = await call('analyst', 'q=%25&pageSize=100'); // a literal "%" matches nothing, it is not a wildcard
    expect(pct.body.total).toBe(0);
  });

  it('refuses bad parameters with a sentence naming the field', async () => {
    const r = await call('analyst', 'pageSize=5000&sort=colour');
    expect(r.status).toBe(400);
    const details = (r.body.error as { details: string[] }).details.join(' ');
    expect(details).toMatch(/pageSize/);
    expect(details).toMatch(/sort/);
  });

  it('checks access: 401 signed out, 404 for another team and for no campaign, metadata only for a steward', async () => {
    expect((await call(null, 'page=1')).status).toBe(401);
    // Another team's campaign looks like a missing one (lib/policy.ts authorizeObject).
    const outsider = await call('outsider', 'page=1');
    expect(outsider.status).toBe(404);
    expect(JSON.stringify(outsider.body)).not.toMatch(/Ne scan/);
    expect((await call('analyst', 'page=1', 999_999_999)).status).toBe(404);
    const steward = await call('steward', 'pageSize=100&sort=offset&dir=desc');
    expect(steward.status).toBe(200);
    expect(steward.body.total).toBe(30);
    expect(steward.body.rows.every((x) => x.offsetDeg === null && x.latestResultId === null)).toBe(true);
  });
});
