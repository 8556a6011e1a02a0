// The web side of archive and restore (C10, issue 14): mark the file (audited), then queue its job. A queue that
// does not answer leaves the file marked; the workers' sweep queues it once Redis is back (lib/jobs/archive.ts).
import { enqueueMove } from '@/lib/jobs/archive';
import { log } from '@/lib/log';
import {
  type CampaignArchiveProgress,
  campaignArchiveProgress,
  campaignFiles,
  type MoveKind,
  type MoveRequestOutcome,
  markMoveRequested,
} from './archive';

type ActorRef = { userId: number; email: string };

export interface MoveAnswer extends MoveRequestOutcome {
  /** False when the job could not be queued now (it is queued later by the sweep). */
  queued: boolean;
}

async function queue(rawFileId: number, kind: MoveKind): Promise<boolean> {
  try {
    await enqueueMove({ rawFileId, kind });
    return true;
  } catch (err) {
    log.warn('archive job not queued; the sweep will queue it', { rawFileId, kind, err });
    return false;
  }
}

export async function requestMove(input: {
  rawFileId: number;
  kind: MoveKind;
  actor: ActorRef;
  ip: string | null;
}): Promise<MoveAnswer> {
  const outcome = await markMoveRequested(input);
  const moving = outcome.state === 'archiving' || outcome.state === 'restoring';
  return { ...outcome, queued: moving ? await queue(input.rawFileId, input.kind) : false };
}

/** Every online file of the campaign archived (or every archived one restored), one job per file. */
export async function requestCampaignMove(input: {
  campaignId: number;
  kind: MoveKind;
  actor: ActorRef;
  ip: string | null;
}): Promise<{ started: number; progress: CampaignArchiveProgress }> {
  const from = input.kind === 'archive' ? 'online' : 'archived';
  const files = (await campaignFiles(input.campaignId)).filter((f) => f.state === from);
  let started = 0;
  for (const f of files) {
    try {
      const o = await markMoveRequested({ ...input, rawFileId: f.id });
      if (o.started) started += 1;
      await queue(f.id, input.kind);
    } catch (err) {
      // A file refused (quarantined, deletion confirmed) does not stop the others; the refusal is in the log.
      log.info('campaign move: one file refused', { rawFileId: f.id, kind: input.kind, err });
    }
  }
  return { started, progress: await campaignArchiveProgress(input.campaignId) };
}
