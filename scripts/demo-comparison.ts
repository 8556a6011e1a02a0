// tsx scripts/demo-comparison.ts — one kept comparison for the fictional Harbor Point Ultrafast Lab (idempotent: a
// comparison of that title in the team is left as it is). Run by scripts/start.sh after scripts/demo-scans.ts on the
// dev instance; never by scripts/test.sh. It draws the demo helium and argon scans at 800 nm against the in-situ
// intensity with the Coulomb-corrected trajectory line, kept by the PI for the angular-streaking group.
// Only a selection is stored: the numbers come from the current results at every opening.
import path from 'node:path';

const invokedDirectly = !!process.argv[1] && path.resolve(process.argv[1]) === path.resolve(import.meta.filename);
if (invokedDirectly) await import('./server-only-shim');

const TITLE = 'He and Ar at 800 nm: offsets against the trajectory model';
const CAMPAIGNS = ['He 800 nm elliptical', 'Ar 800 nm elliptical'];

async function main(): Promise<number> {
  const { loadDotEnv } = await import('./seed');
  loadDotEnv();
  const { getEnv } = await import('@/lib/env');
  getEnv();
  const { closeSequelize, getDb } = await import('@/lib/db');
  getDb();
  try {
    const { Campaign, SavedComparison, Team, User } = await import('@/models');
    const { comparisonSpecSchema } = await import('@/lib/comparison/spec');
    const { createSavedComparison } = await import('@/lib/db/queries/comparison');
    const team = await Team.findOne({ where: { slug: 'attoclock' } });
    const pi = await User.findOne({ where: { email: 'pi@harbor-point.example' } });
    const campaigns = await Campaign.findAll({ where: { name: CAMPAIGNS } });
    if (!team || !pi || campaigns.length !== CAMPAIGNS.length) {
      console.log('demo comparison: the seeded team, PI or campaigns are missing; nothing added');
      return 0;
    }
    if (await SavedComparison.findOne({ where: { team_id: team.id, title: TITLE } })) {
      console.log('demo comparison: already kept');
      return 0;
    }
    const spec = comparisonSpecSchema.parse({
      selection: { campaignIds: campaigns.map((c) => c.id) },
      axes: { y: 'offset', x: 'radius_intensity' },
      seriesBy: 'campaign',
      models: ['trajectory', 'keldysh_rutherford'],
    });
    const saved = await createSavedComparison({
      teamId: team.id,
      title: TITLE,
      note: 'Demo: invented scans from the project’s generator, not measurements.',
      spec,
      userId: pi.id,
    });
    console.log(`demo comparison: kept at /comparisons/${saved.id}`);
    return 0;
  } finally {
    await closeSequelize().catch(() => undefined);
  }
}

if (invokedDirectly) {
  main().then(
    (code) => process.exit(code),
    (err) => {
      console.error(`demo comparison failed: ${(err as Error).message}`);
      process.exit(1);
    },
  );
}
