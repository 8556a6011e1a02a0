// The one Sequelize instance (MariaDB), built from the environment. Node only.
import {
  ConnectionRefusedError,
  ConnectionTimedOutError,
  HostNotFoundError,
  HostNotReachableError,
  Sequelize,
} from 'sequelize';
import { getEnv } from '@/lib/env';
import { log } from '@/lib/log';

const dblog = log.child({ surface: 'database' });

type Cache = { sequelize?: Sequelize };
const g = globalThis as typeof globalThis & { __lobelineDb?: Cache };
// Kept on globalThis so Next's dev reloads and repeated imports share one pool.
if (!g.__lobelineDb) g.__lobelineDb = {};
const state: Cache = g.__lobelineDb;

/**
 * Retry of a statement whose connection could not be opened. Only errors raised before the statement reached the
 * server are retried (so an INSERT is never sent twice); waits 200, 400, 800, 1600 ms (3 s in all), short enough
 * for a web request. Longer outages are ridden out by the reduction queue's back-off (lib/queue/reduction-queue.ts).
 */
export const DB_RETRY = {
  max: 5,
  match: [ConnectionRefusedError, ConnectionTimedOutError, HostNotFoundError, HostNotReachableError],
  backoffBase: 200,
  backoffExponent: 2,
};

export function getSequelize(): Sequelize {
  if (!state.sequelize) {
    const env = getEnv();
    const sequelize = new Sequelize({
      dialect: 'mariadb',
      host: env.DB_HOST,
      port: env.DB_PORT,
      database: env.DB_NAME,
      username: env.DB_USER,
      password: env.DB_PASSWORD,
      timezone: '+00:00',
      benchmark: true,
      logging: (sql: string, timingMs?: number) => {
        if (dblog.isLevelEnabled('debug')) dblog.debug('sql', { sql: sql.slice(0, 2000), ms: timingMs });
      },
      retry: DB_RETRY,
      pool: { max: 10, min: 0, acquire: 20_000, idle: 10_000, evict: 5_000 },
      dialectOptions: {
        connectTimeout: 5_000,
        // Sums, counts and auto-increment ids as JS numbers (all far below 2^53 here).
        bigIntAsNumber: true,
        insertIdAsNumber: true,
        decimalAsNumber: false,
        allowPublicKeyRetrieval: false,
      },
      define: { underscored: true, timestamps: true },
    });
    // Sequelize 6 ignores `skipLocked` on this dialect unless told that MariaDB supports it (10.6+ does).
    (sequelize as unknown as { dialect: { supports: { skipLocked: boolean } } }).dialect.supports.skipLocked = true;
    state.sequelize = sequelize;
  }
  return state.sequelize;
}

export async function closeSequelize(): Promise<void> {
  const s = state.sequelize;
  state.sequelize = undefined;
  if (s) await s.close();
}
