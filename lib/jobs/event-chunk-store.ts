// Partial histograms of the chunk jobs of a split event file (table event_chunk_parts, migration
// 2026.12.06T01.00.00.event-chunks.ts). One row per (request, calibration, settings, software version, chunk
// index): storing a chunk again overwrites the row (and counts the run), never adds a second one.
import { QueryTypes } from 'sequelize';
import { getDb } from '@/lib/db';
import type { EventTally } from '@/reduction/events/kinematics';

export interface ChunkPartKey {
  reductionJobId: number;
  calibrationId: number;
  settingsId: number;
  softwareVersion: string;
}

export interface ChunkPart {
  chunkIndex: number;
  step: number;
  start: number;
  count: number;
  tally: EventTally;
  gridN: number;
  /** Counts per cell of the momentum grid, gridN × gridN, [p_y][p_x]. */
  hist: Float64Array;
  /** How often the chunk was stored (1 when it ran once). */
  runs: number;
}

/** float64 little-endian bytes of a histogram (explicit byte order: any machine may read it back). */
export function encodeHistogram(hist: Float64Array): Buffer {
  const buf = Buffer.allocUnsafe(hist.length * 8);
  for (let i = 0; i < hist.length; i++) buf.writeDoubleLE(hist[i] as number, i * 8);
  return buf;
}

export function decodeHistogram(buf: Buffer, cells: number): Float64Array {
  if (buf.length !== cells * 8) {
    throw new RangeError(`a stored chunk histogram has ${buf.length} bytes, expected ${cells * 8}`);
  }
  const out = new Float64Array(cells);
  for (let i = 0; i < cells; i++) out[i] = buf.readDoubleLE(i * 8);
  return out;
}

/** Stores (or overwrites) the part of one chunk. */
export async function putChunkPart(key: ChunkPartKey, part: Omit<ChunkPart, 'runs'>): Promise<void> {
  if (part.hist.length !== part.gridN * part.gridN) throw new RangeError('histogram does not match grid_n');
  const t = part.tally;
  await getDb().query(
    `INSERT INTO event_chunk_parts
       (reduction_job_id, calibration_id, settings_id, software_version, chunk_index, step_index, event_start,
        event_count, kept, near_node, gated, outside_grid, invalid, grid_n, counts, runs, created_at, updated_at)
     VALUES (:job, :cal, :set, :sw, :idx, :step, :start, :count, :kept, :nearNode, :gated, :outside, :invalid,
             :gridN, :counts, 1, NOW(3), NOW(3))
     ON DUPLICATE KEY UPDATE step_index = VALUES(step_index), event_start = VALUES(event_start),
       event_count = VALUES(event_count), kept = VALUES(kept), near_node = VALUES(near_node), gated = VALUES(gated),
       outside_grid = VALUES(outside_grid), invalid = VALUES(invalid), grid_n = VALUES(grid_n),
       counts = VALUES(counts), runs = runs + 1, updated_at = NOW(3)`,
    {
      replacements: {
        job: key.reductionJobId,
        cal: key.calibrationId,
        set: key.settingsId,
        sw: key.softwareVersion,
        idx: part.chunkIndex,
        step: part.step,
        start: part.start,
        count: part.count,
        kept: t.kept,
        nearNode: t.nearNode,
        gated: t.gated,
        outside: t.outsideGrid,
        invalid: t.invalid,
        gridN: part.gridN,
        counts: encodeHistogram(part.hist),
      },
      type: QueryTypes.INSERT,
    },
  );
}

/** Chunks stored so far for a request. */
export async function countChunkParts(key: ChunkPartKey): Promise<number> {
  const rows = (await getDb().query(
    `SELECT COUNT(*) AS n FROM event_chunk_parts
      WHERE reduction_job_id = ? AND calibration_id = ? AND settings_id = ? AND software_version = ?`,
    {
      replacements: [key.reductionJobId, key.calibrationId, key.settingsId, key.softwareVersion],
      type: QueryTypes.SELECT,
    },
  )) as { n: number | string }[];
  return Number(rows[0]?.n ?? 0);
}

/** The stored part of one chunk, or null. */
export async function readChunkPart(key: ChunkPartKey, chunkIndex: number): Promise<ChunkPart | null> {
  const rows = (await getDb().query(
    `SELECT chunk_index, step_index, event_start, event_count, kept, near_node, gated, outside_grid, invalid, grid_n,
            counts, runs
       FROM event_chunk_parts
      WHERE reduction_job_id = ? AND calibration_id = ? AND settings_id = ? AND software_version = ?
        AND chunk_index = ?`,
    {
      replacements: [key.reductionJobId, key.calibrationId, key.settingsId, key.softwareVersion, chunkIndex],
      type: QueryTypes.SELECT,
    },
  )) as Record<string, unknown>[];
  const r = rows[0];
  if (!r) return null;
  const gridN = Number(r.grid_n);
  return {
    chunkIndex: Number(r.chunk_index),
    step: Number(r.step_index),
    start: Number(r.event_start),
    count: Number(r.event_count),
    tally: {
      kept: Number(r.kept),
      nearNode: Number(r.near_node),
      gated: Number(r.gated),
      outsideGrid: Number(r.outside_grid),
      invalid: Number(r.invalid),
    },
    gridN,
    hist: decodeHistogram(r.counts as Buffer, gridN * gridN),
    runs: Number(r.runs),
  };
}

/** How often each stored chunk ran (chunk index → runs), for the job status and the tests. */
export async function chunkRuns(reductionJobId: number): Promise<Map<number, number>> {
  const rows = (await getDb().query(
    'SELECT chunk_index, runs FROM event_chunk_parts WHERE reduction_job_id = ? ORDER BY chunk_index',
    { replacements: [reductionJobId], type: QueryTypes.SELECT },
  )) as { chunk_index: number; runs: number }[];
  return new Map(rows.map((r) => [Number(r.chunk_index), Number(r.runs)]));
}

/** Removes every stored part of a request (after its merged result was committed). */
export async function deleteChunkParts(reductionJobId: number): Promise<void> {
  await getDb().query('DELETE FROM event_chunk_parts WHERE reduction_job_id = ?', { replacements: [reductionJobId] });
}
