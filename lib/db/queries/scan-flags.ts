import 'server-only';
// Setting and clearing a scan's flag (an analyst's "do not trust this one without a look", PRODUCT.md roles). The
// change and its audit event are written in one transaction, so the trail never misses a flag that took effect.
import { recordAudit } from '@/lib/audit';
import { getDb } from '@/lib/db';
import { AppError } from '@/lib/errors';
import { Scan } from '@/models';

export interface ScanFlagDto {
  scanId: number;
  flagged: boolean;
  flagNote: string | null;
}

export async function setScanFlag({
  scanId,
  flagged,
  reason,
  actor,
  teamId,
  ip,
}: {
  scanId: number;
  flagged: boolean;
  /** Why the scan is flagged, or why the flag is cleared (kept in the audit trail either way). */
  reason: string;
  actor: { userId: number; email: string };
  teamId: number;
  ip: string | null;
}): Promise<ScanFlagDto> {
  const db = getDb();
  try {
    return await db.transaction(async (transaction) => {
      const scan = await Scan.findByPk(scanId, { transaction, lock: transaction.LOCK.UPDATE });
      if (!scan) throw new AppError('not_found:scan', { message: 'This scan does not exist.' });
      const before = { flagged: !!scan.flagged, flagNote: scan.flag_note };
      await scan.update({ flagged, flag_note: flagged ? reason : null }, { transaction });
      await recordAudit(
        {
          action: 'scan.flagged',
          actorId: actor.userId,
          actorEmail: actor.email,
          teamId,
          targetType: 'scan',
          targetId: scanId,
          ip,
          details: { flagged, reason, before },
        },
        { transaction },
      );
      return { scanId, flagged, flagNote: flagged ? reason : null };
    });
  } catch (err) {
    if (err instanceof AppError) throw err;
    throw new AppError('internal:database', { cause: err, context: { what: 'setScanFlag' } });
  }
}
