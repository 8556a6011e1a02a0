/**
 * Event files spread over workers (lib/queue/event-flow.ts): a large event file is reduced as chunk jobs, each of
 * which histograms one contiguous range of events and stores its partial histogram here, and one merge job that
 * sums the parts and runs the analysis.
 *
 * `event_chunk_parts` holds one row per chunk of a reduction request, unique on (request, calibration, settings,
 * software version, chunk index): a chunk that runs again (its worker was killed, the queue lost it) overwrites
 * its row, so the merge sums each chunk exactly once. `counts` is the chunk's histogram on the momentum grid,
 * float64 little-endian, grid_n × grid_n cells, [p_y][p_x] row-major; the tally columns say what became of the
 * chunk's events. Rows are removed once the merged result is committed.
 *
 * `reduction_jobs.chunks_total` / `chunks_done`: progress of a request that was split (NULL for a single job);
 * `chunks_redone`: how many chunk runs were repeats (a killed worker's chunk done again), set by the merge.
 */
import { DataTypes, type QueryInterface } from 'sequelize';

type Ctx = { context: QueryInterface };

const count = () => ({ type: DataTypes.BIGINT.UNSIGNED, allowNull: false, defaultValue: 0 });

export async function up({ context: qi }: Ctx): Promise<void> {
  await qi.addColumn('reduction_jobs', 'chunks_total', { type: DataTypes.INTEGER.UNSIGNED, allowNull: true });
  await qi.addColumn('reduction_jobs', 'chunks_done', { type: DataTypes.INTEGER.UNSIGNED, allowNull: true });
  await qi.addColumn('reduction_jobs', 'chunks_redone', { type: DataTypes.INTEGER.UNSIGNED, allowNull: true });
  await qi.createTable('event_chunk_parts', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true, allowNull: false },
    reduction_job_id: {
      type: DataTypes.INTEGER.UNSIGNED,
      allowNull: false,
      references: { model: 'reduction_jobs', key: 'id' },
      onDelete: 'CASCADE',
      onUpdate: 'CASCADE',
    },
    calibration_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    settings_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    software_version: { type: DataTypes.STRING(32), allowNull: false },
    chunk_index: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    step_index: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    event_start: { type: DataTypes.BIGINT.UNSIGNED, allowNull: false },
    event_count: { type: DataTypes.BIGINT.UNSIGNED, allowNull: false },
    kept: count(),
    near_node: count(),
    gated: count(),
    outside_grid: count(),
    invalid: count(),
    grid_n: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    counts: { type: DataTypes.BLOB('long'), allowNull: false },
    runs: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 1 },
    created_at: { type: DataTypes.DATE(3), allowNull: false },
    updated_at: { type: DataTypes.DATE(3), allowNull: false },
  });
  await qi.addIndex(
    'event_chunk_parts',
    ['reduction_job_id', 'calibration_id', 'settings_id', 'software_version', 'chunk_index'],
    { name: 'event_chunk_parts_key', unique: true },
  );
}

export async function down({ context: qi }: Ctx): Promise<void> {
  await qi.dropTable('event_chunk_parts');
  await qi.removeColumn('reduction_jobs', 'chunks_redone');
  await qi.removeColumn('reduction_jobs', 'chunks_done');
  await qi.removeColumn('reduction_jobs', 'chunks_total');
}
