import 'server-only';
// "Is this file already stored?" for the shift page's pre-check: the browser hashes each dropped file (SHA-256)
// and asks before sending, so a duplicate is shown as such before it is sent. Only scans of the shift's own team are
// named; a checksum stored by another team is not revealed.
import { Op } from 'sequelize';
import { getShiftRecord } from '@/lib/db/queries/ingest';
import { AppError } from '@/lib/errors';
import { type Actor, authorizeObject } from '@/lib/policy';
import { Campaign, RawFile, Scan, Shift } from '@/models';

export interface StoredMatchDto {
  sha256: string;
  rawFileId: number;
  fileName: string;
  rawStatus: string;
  /** The first scan of that file in the shift's campaign, when there is one (a duplicate is counted as it). */
  campaignScanId: number | null;
  scans: { scanId: number; shiftId: number; shiftTitle: string; campaignName: string; sameCampaign: boolean }[];
}

/**
 * The stored files (of the shift's team) with these SHA-256 checksums.
 *
 * @param sha256s - lower-case hex checksums, at most 100
 */
export async function findStoredBySha256(actor: Actor, shiftId: number, sha256s: string[]): Promise<StoredMatchDto[]> {
  const shift = await getShiftRecord({ shiftId });
  if (!shift) throw new AppError('not_found:shift');
  authorizeObject(actor, 'upload.create', { teamId: shift.teamId, surface: 'shift' });
  if (!sha256s.length) return [];
  const raws = await RawFile.findAll({ where: { sha256: { [Op.in]: sha256s }, deleted_at: null } });
  if (!raws.length) return [];
  const scans = await Scan.findAll({
    where: { raw_file_id: { [Op.in]: raws.map((r) => r.id) }, team_id: shift.teamId },
    order: [['id', 'ASC']],
  });
  const shifts = await Shift.findAll({ where: { id: { [Op.in]: [...new Set(scans.map((s) => s.shift_id))] } } });
  const campaigns = await Campaign.findAll({
    where: { id: { [Op.in]: [...new Set(scans.map((s) => s.campaign_id))] } },
  });
  const shiftTitle = new Map(shifts.map((s) => [s.id, s.title]));
  const campaignName = new Map(campaigns.map((c) => [c.id, c.name]));
  return raws
    .map((r) => {
      const own = scans.filter((s) => s.raw_file_id === r.id);
      return {
        sha256: r.sha256,
        rawFileId: r.id,
        fileName: r.original_name,
        rawStatus: r.status,
        campaignScanId: own.find((s) => s.campaign_id === shift.campaignId)?.id ?? null,
        scans: own.map((s) => ({
          scanId: s.id,
          shiftId: s.shift_id,
          shiftTitle: shiftTitle.get(s.shift_id) ?? '',
          campaignName: campaignName.get(s.campaign_id) ?? '',
          sameCampaign: s.campaign_id === shift.campaignId,
        })),
      };
    })
    .filter((m) => m.scans.length > 0);
}
