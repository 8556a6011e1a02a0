// Redis connections for the reduction queue (BullMQ over ioredis), built from REDIS_URL.
// Two kinds: a worker's connection waits for Redis as long as it takes (BullMQ needs `maxRetriesPerRequest: null`
// on the connections it blocks on), while a producer's connection (the web server adding jobs) fails fast: no
// offline queue, one retry per command, so that a request never hangs while Redis is away. Every connection made
// here is tracked so that `closeQueueConnections()` can end them (otherwise a script or a test process never exits).
import { Redis } from 'ioredis';
import { getEnv } from '@/lib/env';
import { log } from '@/lib/log';

const qlog = log.child({ surface: 'queue' });

type Cache = { open: Set<Redis> };
const g = globalThis as typeof globalThis & { __lobelineRedis?: Cache };
if (!g.__lobelineRedis) g.__lobelineRedis = { open: new Set() };
const state: Cache = g.__lobelineRedis;

/** Longest wait for the first connection of a producer before a command fails (ms). */
export const PRODUCER_CONNECT_TIMEOUT_MS = 3_000;

export interface RedisConnectionOptions {
  /**
   * `wait` (workers): commands wait while Redis is away and run once it is back.
   * `fail-fast` (producers): a command sent while Redis is away fails at once with an error.
   */
  mode?: 'wait' | 'fail-fast';
}

/**
 * A new ioredis connection to REDIS_URL.
 *
 * @param purpose - a short name for the log (`queue`, `worker`, …)
 */
export function createRedisConnection(purpose: string, options: RedisConnectionOptions = {}): Redis {
  const failFast = options.mode === 'fail-fast';
  const redis = new Redis(getEnv().REDIS_URL, {
    maxRetriesPerRequest: failFast ? 1 : null,
    enableOfflineQueue: !failFast,
    connectTimeout: failFast ? PRODUCER_CONNECT_TIMEOUT_MS : 10_000,
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
