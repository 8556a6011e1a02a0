/**
 * Worker leases: a named, time-limited lease that one worker process holds at a time. The periodic sweep that puts
 * lost reduction jobs back on the queue (lib/jobs/sweep.ts) runs only in the worker that holds the
 * `reduction-sweep` lease, so two workers never re-queue the same job at once.
 */
import { DataTypes, type QueryInterface } from 'sequelize';

type Ctx = { context: QueryInterface };

export async function up({ context: qi }: Ctx): Promise<void> {
  await qi.createTable('worker_leases', {
    name: { type: DataTypes.STRING(64), allowNull: false, primaryKey: true },
    holder: { type: DataTypes.STRING(200), allowNull: true },
    expires_at: { type: DataTypes.DATE(3), allowNull: false },
  });
}

export async function down({ context: qi }: Ctx): Promise<void> {
  await qi.dropTable('worker_leases');
}
