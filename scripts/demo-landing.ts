// tsx scripts/demo-landing.ts — a published public landing page for the demo (idempotent: a campaign that already
// has a landing row is left as it is). Run by scripts/start.sh for the dev instance after scripts/demo-citation.ts;
// never by scripts/test.sh. Publishes "Ar 800 nm elliptical" (whose demo citation metadata has what publishing
// needs) through the same query the PI's button uses, as the demo PI, so the event is in the audit trail, and
// prints the page's address.
import path from 'node:path';

const invokedDirectly = !!process.argv[1] && path.resolve(process.argv[1]) === path.resolve(import.meta.filename);
if (invokedDirectly) await import('./server-only-shim');

export async function addDemoLanding(): Promise<string> {
  const { getDb } = await import('@/lib/db');
  getDb();
  const { Campaign, CampaignLanding, User } = await import('@/models');
  const { setLandingPublished } = await import('@/lib/db/queries/landing');
  const ar = await Campaign.findOne({ where: { name: 'Ar 800 nm elliptical' } });
  const pi = await User.findOne({ where: { email: 'pi@harbor-point.example' } });
  if (!ar || !pi) return 'demo public page: the seeded campaign or PI is missing (run the seed first)';
  const existing = await CampaignLanding.findOne({ where: { campaign_id: ar.id } });
  if (existing) return `demo public page: already there, /data/${existing.public_id}`;
  const state = await setLandingPublished({
    campaignId: ar.id,
    teamId: ar.team_id,
    published: true,
    actor: { userId: pi.id, email: pi.email },
    ip: null,
  });
  return `demo public page: ${ar.name} at ${state.path}`;
}

if (invokedDirectly) {
  try {
    console.log(await addDemoLanding());
  } finally {
    const { closeSequelize } = await import('@/lib/db');
    await closeSequelize().catch(() => undefined);
  }
}
