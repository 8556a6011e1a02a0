// What the drop panel must point out before a file is sent, and the operator confirm per file: a file whose target,
// wavelength or kind of experiment differs from its campaign's, a file already stored (the server is asked by
// SHA-256, lib/ingest/lookup.ts), or a file dropped twice. Pure functions of the queue's items, so they are tested
// without a browser.
import type { StoredMatchDto } from '@/lib/ingest/lookup';

/** The campaign facts a dropped file is compared with. */
export interface CampaignFacts {
  name: string;
  target: string;
  wavelengthNm: number;
  experimentKind: string;
}

/** The parts of a queue item these checks read (components/ingest/use-ingest-queue.ts QueueItem). */
export interface AttentionItem {
  key: string;
  file: { name: string; size: number; lastModified: number };
  sha256: string | null;
  /** undefined: not asked yet; null: not stored. */
  storedMatch?: StoredMatchDto | null;
  precheck: {
    summary: { target: string | null; wavelengthNm: number | null; experimentKind: string | null } | null;
  } | null;
}

export interface Attention {
  kind: 'campaign' | 'stored' | 'in-drop';
  sentence: string;
}

/**
 * Wavelengths closer than this fraction count as the same laser line (our choice: 0.5 %, i.e. 4 nm at 800 nm;
 * a Ti:sapphire line drifts by a few nm between days, a second source is tens of nm away).
 */
export const WAVELENGTH_TOLERANCE = 0.005;

const sameTarget = (a: string, b: string) => a.trim().toLowerCase() === b.trim().toLowerCase();

/** Everything about `item` the operator must confirm before it is sent (empty when nothing). */
export function attentionFor(item: AttentionItem, all: AttentionItem[], campaign: CampaignFacts | null): Attention[] {
  const out: Attention[] = [];
  const s = item.precheck?.summary;
  if (campaign && s) {
    if (s.target && !sameTarget(s.target, campaign.target)) {
      out.push({
        kind: 'campaign',
        sentence: `The file's target is ${s.target}, but the campaign “${campaign.name}” is on ${campaign.target}.`,
      });
    }
    if (
      s.wavelengthNm != null &&
      Math.abs(s.wavelengthNm - campaign.wavelengthNm) > WAVELENGTH_TOLERANCE * campaign.wavelengthNm
    ) {
      out.push({
        kind: 'campaign',
        sentence: `The file's wavelength is ${s.wavelengthNm} nm, but the campaign “${campaign.name}” is at ${campaign.wavelengthNm} nm.`,
      });
    }
    if (s.experimentKind && s.experimentKind !== campaign.experimentKind) {
      out.push({
        kind: 'campaign',
        sentence: `The file is a ${s.experimentKind.replace(/_/g, ' ')} scan, but the campaign is ${campaign.experimentKind.replace(/_/g, ' ')}.`,
      });
    }
  }
  const m = item.storedMatch;
  if (m) {
    const here = m.scans.find((x) => x.sameCampaign);
    out.push({
      kind: 'stored',
      sentence: here
        ? `Identical (same SHA-256) to “${m.fileName}”, already scan ${here.scanId} of this campaign (shift “${here.shiftTitle}”). Sent again, it is linked to that scan and not counted twice.`
        : `Identical (same SHA-256) to “${m.fileName}”, already stored in “${m.scans[0]?.campaignName ?? 'another campaign'}”. Sent again, it is linked to the stored file instead of a second copy.`,
    });
  }
  const index = all.findIndex((x) => x.key === item.key);
  const twin = all
    .slice(0, Math.max(0, index))
    .find((x) =>
      item.sha256 && x.sha256
        ? x.sha256 === item.sha256
        : x.file.name === item.file.name &&
          x.file.size === item.file.size &&
          x.file.lastModified === item.file.lastModified,
    );
  if (twin) {
    out.push({
      kind: 'in-drop',
      sentence:
        item.sha256 && twin.sha256
          ? `The same file (same SHA-256) as “${twin.file.name}” above, dropped twice.`
          : `Dropped twice: “${twin.file.name}” above has the same name, size and date.`,
    });
  }
  return out;
}
