// The scan table's free-text filter (`q`) after it moved to the indexed scans.search_text column
// (migrations/2026.12.02T17.10.00.scan-search-text.ts): it must find exactly what the former query found, a
// case-insensitive substring of the title or of the raw file's name. The reference is that former SQL, run here
// beside the new one on the same rows (MariaDB's own LIKE under the table's collation), plus a few expected sets
// written out by hand. Renames after the upload (title, file name) must be found too, which the triggers provide.
import { randomBytes } from 'node:crypto';
import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { getDb } from '@/lib/db';
import { listCampaignScans } from '@/lib/db/queries/scans';
import { Campaign, RawFile, Scan, Shift, Team, User } from '@/models';
import { rawFileRow } from './helpers/rows';

vi.mock('server-only', () => ({}));

const tag = randomBytes(4).toString('hex');
let campaignId = 0;
const ids: Record<string, number> = {};

const SCANS: [key: string, title: string | null, fileName: string][] = [
  ['a', 'Ar 800 nm delay scan 01', 'hp_2026-11-30_ar_001.h5'],
  ['b', 'Ne ellipticity sweep', 'HP_NE_Sweep_07.h5'],
  ['c', null, 'untitled_run_013.h5'],
  ['d', 'Calibration 100% pulse energy', 'cal_100pct.h5'],
  ['e', 'he_probe_a', 'probe.h5'],
  ['f', 'Kr scan 010 (retake)', 'kr-retake.h5'],
];

async function legacyIds(q: string): Promise<number[]> {
  const like = `%${q.replace(/[\\%_]/g, (m) => `\\${m}`)}%`;
  const rows = await getDb().query<{ id: number }>(
    `SELECT s.id FROM scans s JOIN raw_files f ON f.id = s.raw_file_id
      WHERE s.campaign_id = :c AND (s.title LIKE :q ESCAPE '\\\\' OR f.original_name LIKE :q ESCAPE '\\\\')
      ORDER BY s.id`,
    { replacements: { c: campaignId, q: like }, type: QueryTypes.SELECT },
  );
  return rows.map((r) => Number(r.id));
}

async function filterIds(q: string): Promise<number[]> {
  const { rows, total } = await listCampaignScans({ campaignId, page: 1, pageSize: 100, sort: 'id', dir: 'asc', q });
  expect(total).toBe(rows.length);
  return rows.map((r) => r.id);
}

const keys = (...k: string[]) => k.map((x) => ids[x] as number).sort((p, q) => p - q);

beforeAll(async () => {
  getDb();
  const team = await Team.create({ slug: `srch-${tag}`, name: `Search test ${tag}`, description: null });
  const user = await User.create({
    email: `search-${tag}@harbor-point.example`,
    name: 'Search Tester',
    password_hash: null,
    notification_prefs: null,
    last_sign_in_at: null,
  });
  const campaign = await Campaign.create({
    team_id: team.id,
    name: `Search ${tag}`,
    target: 'Ar',
    wavelength_nm: 800,
    experiment_kind: 'angular_streaking',
    description: null,
    created_by: user.id,
    current_calibration_id: null,
    current_settings_id: null,
    embargo_until: null,
  });
  campaignId = campaign.id;
  const shift = await Shift.create({
    team_id: team.id,
    campaign_id: campaign.id,
    title: 'Search shift',
    opened_by: user.id,
    opened_at: new Date(),
    closed_by: null,
    closed_at: null,
    receipt_sent_at: null,
  });
  for (const [key, title, fileName] of SCANS) {
    const raw = await RawFile.create(rawFileRow(team.id, { original_name: fileName }));
    const scan = await Scan.create({
      team_id: team.id,
      campaign_id: campaign.id,
      shift_id: shift.id,
      raw_file_id: raw.id,
      experiment_kind: 'angular_streaking',
      title,
      target: 'Ar',
      wavelength_nm: 800,
      ellipticity: null,
      helicity: null,
      step_quantity: 'delay_fs',
      n_steps: 3,
      n_y: 64,
      n_x: 64,
      started_at: new Date(),
      status: 'uploaded',
      status_message: null,
      flag_note: null,
      latest_result_id: null,
      offset_deg: null,
      offset_err_deg: null,
      created_by: null,
    });
    ids[key] = scan.id;
  }
});

afterAll(async () => {
  await Scan.destroy({ where: { campaign_id: campaignId } });
});

describe('free-text filter of the scan table', () => {
  const probes = ['scan 01', 'SCAN', 'sweep', '_0', '100%', '%', '_', 'untitled', 'h5', 'e_p', 'ar_0', 'nope', 'n 0'];

  it('finds the same scans as the former title-or-file-name query', async () => {
    for (const q of probes) expect(await filterIds(q), `q=${q}`).toEqual(await legacyIds(q));
  });

  it('finds the expected scans (sets written out by hand)', async () => {
    expect(await filterIds('scan 01')).toEqual(keys('a', 'f')); // substring inside a title, any case
    expect(await filterIds('SWEEP')).toEqual(keys('b')); // title and file name both match: listed once
    expect(await filterIds('untitled_run')).toEqual(keys('c')); // file name only (no title)
    expect(await filterIds('100%')).toEqual(keys('d')); // % is a character, not a wildcard
    expect(await filterIds('e_p')).toEqual(keys('e')); // _ is a character, not a wildcard
    expect(await filterIds('nope')).toEqual([]);
  });

  it('does not match across the boundary of title and file name', async () => {
    // search_text of "he_probe_a" / "probe.h5" is "he_probe_a", line feed, "probe.h5": a filter with that line feed
    // would match the joined text but neither column, so it must take the former query.
    expect(await legacyIds('a\nprobe')).toEqual([]);
    expect(await filterIds('a\nprobe')).toEqual([]);
  });

  it('follows a retitled scan and a renamed raw file', async () => {
    await Scan.update({ title: 'Xe harmonic check' }, { where: { id: ids.e } });
    const scan = await Scan.findByPk(ids.b);
    await RawFile.update({ original_name: 'renamed_xenon.h5' }, { where: { id: scan?.raw_file_id ?? 0 } });
    expect(await filterIds('harmonic')).toEqual(keys('e'));
    expect(await filterIds('he_probe')).toEqual([]);
    expect(await filterIds('xenon')).toEqual(keys('b'));
    expect(await filterIds('Sweep_07')).toEqual([]);
    expect(await filterIds('ellipticity')).toEqual(keys('b'));
    for (const q of ['harmonic', 'xenon', 'sweep', 'h5']) expect(await filterIds(q), q).toEqual(await legacyIds(q));
  });
});
