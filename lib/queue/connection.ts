// Redis connections for the reduction queue (BullMQ over ioredis), built from REDIS_URL.
// BullMQ needs `maxRetriesPerRequest: null` on the connections its workers block on; every connection made here is
// tracked so that `closeQueueConnections()` can end them (otherwise a script or a test process never exits).
import { Redis } from 'ioredis';
import { getEnv } from '@/lib/env';
import { log } from '@/lib/log';

const qlog = log.child({ surface: 'queue' });

type Cache = { open: Set<Redis> };
const g = globalThis as typeof globalThis & { __lobelineRedis?: Cache };
if (!g.__lobelineRedis) g.__lobelineRedis = { open: new Set() };
const state: Cache = g.__lobelineRedis;

/**
 * A new ioredis connection to REDIS_URL.
 *
 * @param purpose - a short name for the log (`queue`, `worker`, …)
 */
export function createRedisConnection(purpose: string): Redis {
  const redis = new Redis(getEnv().REDIS_URL, {
    maxRetriesPerRequest: null,
    enableReadyCheck: true,
    connectionName: `lobeline-${purpose}`,
    // Reconnect with a capped back-off; BullMQ keeps working once Redis is back.
    retryStrategy: (times) => Math.min(times * 200, 5_000),
  });
  let warned = false;
  redis.on('error', (err) => {
    if (warned) return;
    warned = true;
    qlog.warn('redis connection problem', { purpose, err });
  });
  redis.on('ready', () => {
    warned = false;
  });
  state.open.add(redis);
  redis.once('end', () => state.open.delete(redis));
  return redis;
}

/** Ends every connection made by `createRedisConnection` (for shutdown paths and tests). */
export async function closeQueueConnections(): Promise<void> {
  const all = [...state.open];
  state.open.clear();
  await Promise.all(
    all.map(async (r) => {
      try {
        await r.quit();
      } catch {
        r.disconnect();
      }
    }),
  );
}
