// Sign-in throttling with rate-limiter-flexible on Redis (shared by every web process; an in-memory limiter of the
// same shape takes over while Redis does not answer, so an outage neither blocks sign-in nor lifts the limits).
//
//   - per account: the first FREE_FAILURES_PER_ACCOUNT failures in SIGN_IN_WINDOW_SECONDS cost nothing; after that
//     each failure makes the next attempt wait twice as long, from 1 s up to MAX_ACCOUNT_WAIT_SECONDS. The account
//     is slowed, never locked, so nobody can shut its owner out (OWASP ASVS 4.0 V2.2.1: anti-automation that does
//     not lock the account; NIST SP 800-63B §5.2.2 rate limiting, from memory);
//   - per client address (lib/auth/client-address.ts, never a header the client chose): MAX_FAILURES_PER_ADDRESS
//     failures in the window, whatever the accounts, then refused until the window ends.
import { Redis } from 'ioredis';
import { RateLimiterMemory, RateLimiterRedis, type RateLimiterRes } from 'rate-limiter-flexible';
import { getEnv } from '@/lib/env';

export const SIGN_IN_WINDOW_SECONDS = 15 * 60;
export const FREE_FAILURES_PER_ACCOUNT = 5;
export const MAX_ACCOUNT_WAIT_SECONDS = 60;
export const MAX_FAILURES_PER_ADDRESS = 20;

/** Seconds the next attempt must wait after the n-th failure in the window (0 up to the free failures). */
export function accountWaitSeconds(failures: number): number {
  if (failures < FREE_FAILURES_PER_ACCOUNT) return 0;
  return Math.min(MAX_ACCOUNT_WAIT_SECONDS, 2 ** (failures - FREE_FAILURES_PER_ACCOUNT));
}

interface Limiters {
  redis: Redis;
  accountFailures: RateLimiterRedis;
  accountWait: RateLimiterRedis;
  addressFailures: RateLimiterRedis;
}

const g = globalThis as typeof globalThis & { __lobelineSignInLimiters?: Limiters };

function limiters(): Limiters {
  if (g.__lobelineSignInLimiters) return g.__lobelineSignInLimiters;
  // Fail fast: a command waits at most a couple of seconds for Redis, then the in-memory insurance answers.
  const redis = new Redis(getEnv().REDIS_URL, {
    maxRetriesPerRequest: 1,
    connectTimeout: 2000,
    enableOfflineQueue: true,
  });
  redis.on('error', () => undefined); // reported by the limiter calls that fail, not as an unhandled event
  const make = (keyPrefix: string, points: number, duration: number) =>
    new RateLimiterRedis({
      storeClient: redis,
      keyPrefix,
      points,
      duration,
      insuranceLimiter: new RateLimiterMemory({ keyPrefix, points, duration }),
    });
  const l: Limiters = {
    redis,
    accountFailures: make('lobeline:sign-in:account-failures', 100_000, SIGN_IN_WINDOW_SECONDS),
    accountWait: make('lobeline:sign-in:account-wait', 1, MAX_ACCOUNT_WAIT_SECONDS),
    addressFailures: make('lobeline:sign-in:address-failures', MAX_FAILURES_PER_ADDRESS, SIGN_IN_WINDOW_SECONDS),
  };
  g.__lobelineSignInLimiters = l;
  return l;
}

const seconds = (r: RateLimiterRes | null) => Math.max(1, Math.ceil((r?.msBeforeNext ?? 1000) / 1000));

export type ThrottleVerdict =
  | { allowed: true }
  | { allowed: false; limitedBy: 'account' | 'address'; retryAfterSeconds: number; failures: number };

/** Whether an attempt for this account from this address may be checked now. */
export async function checkSignInThrottle(input: { email: string; ip: string }): Promise<ThrottleVerdict> {
  const l = limiters();
  const [wait, address, account] = await Promise.all([
    l.accountWait.get(input.email),
    l.addressFailures.get(input.ip),
    l.accountFailures.get(input.email),
  ]);
  if (address && address.consumedPoints >= MAX_FAILURES_PER_ADDRESS) {
    return {
      allowed: false,
      limitedBy: 'address',
      retryAfterSeconds: seconds(address),
      failures: address.consumedPoints,
    };
  }
  if (wait && wait.consumedPoints > 1) {
    return {
      allowed: false,
      limitedBy: 'account',
      retryAfterSeconds: seconds(wait),
      failures: account?.consumedPoints ?? 0,
    };
  }
  return { allowed: true };
}

/** Counts a failed attempt against the account and the address and starts the account's wait. */
export async function recordSignInFailure(input: { email: string; ip: string }): Promise<void> {
  const l = limiters();
  const [account] = await Promise.all([
    l.accountFailures.penalty(input.email, 1),
    l.addressFailures.penalty(input.ip, 1),
  ]);
  const waitS = accountWaitSeconds(account.consumedPoints);
  if (waitS > 0) await l.accountWait.block(input.email, waitS);
}

/** A successful sign-in clears the account's failures and wait (not the address's count). */
export async function recordSignInSuccess(input: { email: string }): Promise<void> {
  const l = limiters();
  await Promise.all([l.accountFailures.delete(input.email), l.accountWait.delete(input.email)]);
}

/** For tests: ends an account's current wait, as if it had passed. */
export async function endAccountWaitForTests(email: string): Promise<void> {
  if (process.env.NODE_ENV !== 'test') throw new Error('only in tests');
  await limiters().accountWait.delete(email);
}

export async function closeSignInThrottle(): Promise<void> {
  const l = g.__lobelineSignInLimiters;
  g.__lobelineSignInLimiters = undefined;
  if (l) await l.redis.quit().catch(() => undefined);
}
