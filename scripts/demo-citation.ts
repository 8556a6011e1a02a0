// tsx scripts/demo-citation.ts — demo stewardship data for the fictional Harbor Point Ultrafast Lab (idempotent: a
// campaign that already has citation metadata is left as it is). Run by scripts/start.sh for the dev instance after
// the seed; never by scripts/test.sh. Gives "Ar 800 nm elliptical" nearly complete citation metadata (no DOI yet,
// so its DataCite record waits for one) and a retention date, and puts "Ne 1300 nm bicircular" under an embargo,
// so the file register and the citation pages have something to show. All names, numbers and identifiers are
// invented demo values (the DOI prefix 10.5555 is the one commonly used for examples; the ORCID iD is ORCID's own
// documented example identifier).
import path from 'node:path';

const invokedDirectly = !!process.argv[1] && path.resolve(process.argv[1]) === path.resolve(import.meta.filename);
if (invokedDirectly) await import('./server-only-shim');

export async function addDemoCitations(): Promise<string> {
  const { getDb } = await import('@/lib/db');
  getDb();
  const { Campaign, CampaignCitation } = await import('@/models');
  const { citationBodySchema } = await import('@/lib/citation/schema');
  const { citationItems, summarize } = await import('@/lib/citation/completeness');
  const ar = await Campaign.findOne({ where: { name: 'Ar 800 nm elliptical' } });
  const ne = await Campaign.findOne({ where: { name: 'Ne 1300 nm bicircular' } });
  const done: string[] = [];
  if (ar && !(await CampaignCitation.findOne({ where: { campaign_id: ar.id } }))) {
    const body = citationBodySchema.parse({
      publisher: 'Harbor Point Ultrafast Lab',
      publicationYear: 2026,
      version: '0.9',
      licence: 'CC-BY-4.0',
      description:
        'Photoelectron momentum images of argon in elliptically polarised 800 nm pulses, the Coulomb-correction reference of the angular streaking group (demo data).',
      keywords: ['attoclock', 'argon', 'angular streaking'],
      creators: [
        {
          givenName: 'Ines',
          familyName: 'Halvorsen',
          orcid: '0000-0002-1825-0097',
          affiliations: [{ name: 'Harbor Point Ultrafast Lab' }],
        },
        { nameType: 'Organizational', organisationName: 'Harbor Point angular streaking group' },
      ],
      funding: [{ funderName: 'Harbor Point Science Trust', awardNumber: 'HPST-2026-07' }],
    });
    const c = summarize(citationItems(body));
    await CampaignCitation.create({
      campaign_id: ar.id,
      body,
      items_present: c.items.filter((i) => i.present).length,
      items_total: c.items.length,
      required_missing: c.requiredMissing,
      updated_by: null,
    });
    await ar.update({ retention_until: '2036-12-31' });
    done.push(`${ar.name}: citation metadata (no DOI yet), kept until 2036-12-31`);
  }
  if (ne && !ne.embargo_until) {
    await ne.update({ embargo_until: '2027-09-30' });
    done.push(`${ne.name}: embargo until 2027-09-30`);
  }
  return done.length ? `demo citations: ${done.join('; ')}` : 'demo citations: already there';
}

if (invokedDirectly) {
  try {
    console.log(await addDemoCitations());
  } finally {
    const { closeSequelize } = await import('@/lib/db');
    await closeSequelize().catch(() => undefined);
  }
}
