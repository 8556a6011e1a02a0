/**
 * Model overlays cached per parameter set (issue 13, PRODUCT.md C9). The table `model_cache` came with the initial
 * schema (a hash, the model name, its parameters and the result); this adds what a long run through the model queue
 * needs: the model code version that went into the hash, a state (queued → running → done | failed), progress
 * (trajectories done of the total), the error of a failed run and how long the computation took. `result` may now be
 * empty while a run is queued or running.
 */
import { DataTypes, type QueryInterface } from 'sequelize';

type Ctx = { context: QueryInterface };

export async function up({ context: qi }: Ctx): Promise<void> {
  await qi.addColumn('model_cache', 'code_version', { type: DataTypes.STRING(32), allowNull: false, defaultValue: '' });
  await qi.addColumn('model_cache', 'state', {
    type: DataTypes.ENUM('queued', 'running', 'done', 'failed'),
    allowNull: false,
    defaultValue: 'done',
  });
  await qi.addColumn('model_cache', 'progress_done', {
    type: DataTypes.INTEGER.UNSIGNED,
    allowNull: false,
    defaultValue: 0,
  });
  await qi.addColumn('model_cache', 'progress_total', {
    type: DataTypes.INTEGER.UNSIGNED,
    allowNull: false,
    defaultValue: 0,
  });
  await qi.addColumn('model_cache', 'error', { type: DataTypes.TEXT, allowNull: true });
  await qi.addColumn('model_cache', 'compute_ms', { type: DataTypes.INTEGER.UNSIGNED, allowNull: true });
  await qi.changeColumn('model_cache', 'result', { type: DataTypes.JSON, allowNull: true });
}

export async function down({ context: qi }: Ctx): Promise<void> {
  await qi.sequelize.query('DELETE FROM model_cache WHERE result IS NULL');
  await qi.changeColumn('model_cache', 'result', { type: DataTypes.JSON, allowNull: false });
  for (const c of ['compute_ms', 'error', 'progress_total', 'progress_done', 'state', 'code_version']) {
    await qi.removeColumn('model_cache', c);
  }
}
