// The browser side of an upload: asks the server for a ticket (start or resume), sends the bytes straight to S3
// through presigned URLs (one PUT, or parts; every PUT of the batch takes a slot of one shared PartSlots, so the
// requests in flight stay bounded however many files are sent at once), retries failed parts with exponential
// backoff, waits while the browser is offline, asks the server to verify and, for a large file that the server
// verifies in its worker, asks until the verdict is there. Cancel aborts everything. Browser only.
import { ApiError, apiFetch } from '@/lib/api/client';
import { PARALLEL_PARTS, partRange, retryDelayMs } from '@/lib/ingest/plan';
import type { Precheck } from '@/lib/ingest/schemas';
import type { PartUrlDto, UploadOutcomeDto, UploadStateDto, UploadTicketDto } from '@/lib/ingest/types';

const MAX_ATTEMPTS = 6;
/** First and longest wait between two questions for the verdict on a file the server's worker verifies. */
const VERDICT_POLL_FIRST_MS = 700;
const VERDICT_POLL_MAX_MS = 5_000;
const URL_BATCH = 16;

export interface UploadCallbacks {
  /** Bytes stored so far (parts already in storage count from the start) and the total. */
  onProgress(loaded: number, total: number): void;
  onPhase(phase: 'sending' | 'waiting-hash' | 'verifying', info?: { resumedBytes?: number }): void;
  /** A request failed and is tried again after `waitMs` (null once a later request went through). */
  onRetry?(info: RetryInfo | null): void;
}

export interface RetryInfo {
  attempt: number;
  maxAttempts: number;
  waitMs: number;
  reason: string;
  /** The browser reported no network: the retry waits for it to come back, at most `waitMs`. */
  offline: boolean;
}

/**
 * A counting semaphore for PUTs to storage, shared by the files of a batch: at most `size` requests in flight in
 * all. Waiters are served in the order they asked.
 */
export class PartSlots {
  private free: number;
  private readonly waiting: (() => void)[] = [];

  constructor(readonly size: number) {
    this.free = size;
  }

  /** Resolves with the release function once a slot is free (rejects when `signal` aborts first). */
  acquire(signal: AbortSignal): Promise<() => void> {
    if (signal.aborted) return Promise.reject(new Cancelled());
    let released = false;
    const release = () => {
      if (released) return;
      released = true;
      const next = this.waiting.shift();
      if (next) next();
      else this.free++;
    };
    if (this.free > 0) {
      this.free--;
      return Promise.resolve(release);
    }
    return new Promise((resolve, reject) => {
      const grant = () => {
        signal.removeEventListener('abort', onAbort);
        resolve(release);
      };
      const onAbort = () => {
        const i = this.waiting.indexOf(grant);
        if (i >= 0) this.waiting.splice(i, 1);
        reject(new Cancelled());
      };
      this.waiting.push(grant);
      signal.addEventListener('abort', onAbort, { once: true });
    });
  }
}

export interface UploadInput {
  /** Slots shared with the other files being sent (default: this file's own PARALLEL_PARTS). */
  slots?: PartSlots;
  file: File;
  shiftId: number;
  precheck: Precheck | null;
  replacesRawFileId?: number;
  sha256: Promise<string | null>;
  signal: AbortSignal;
}

class Cancelled extends Error {
  constructor() {
    super('Cancelled.');
    this.name = 'AbortError';
  }
}

const sleep = (ms: number, signal: AbortSignal) =>
  new Promise<void>((resolve, reject) => {
    const t = setTimeout(resolve, ms);
    signal.addEventListener(
      'abort',
      () => {
        clearTimeout(t);
        reject(new Cancelled());
      },
      { once: true },
    );
  });

/** Longest wait for an `online` event before trying anyway. */
const OFFLINE_WAIT_MS = 15_000;

/**
 * Waits while the browser says it is offline, but never longer than `maxMs`: `navigator.onLine` is only a hint
 * (it is false on a machine whose only network is loopback, e.g. a lab PC serving Lobeline to itself), so a
 * retry must not depend on an `online` event that may never come.
 */
async function whenOnline(signal: AbortSignal, maxMs: number): Promise<void> {
  if (typeof navigator === 'undefined' || navigator.onLine) return;
  await new Promise<void>((resolve, reject) => {
    const done = () => {
      clearTimeout(t);
      window.removeEventListener('online', done);
      signal.removeEventListener('abort', abort);
      resolve();
    };
    const abort = () => {
      clearTimeout(t);
      window.removeEventListener('online', done);
      reject(new Cancelled());
    };
    const t = setTimeout(done, maxMs);
    window.addEventListener('online', done);
    signal.addEventListener('abort', abort, { once: true });
  });
}

/** One PUT with upload progress (fetch cannot report it). Resolves on 2xx; rejects with the status otherwise. */
function put(url: string, body: Blob, signal: AbortSignal, onLoaded: (n: number) => void): Promise<void> {
  return new Promise((resolve, reject) => {
    const xhr = new XMLHttpRequest();
    xhr.open('PUT', url);
    xhr.upload.onprogress = (e) => onLoaded(e.loaded);
    xhr.onload = () => (xhr.status >= 200 && xhr.status < 300 ? resolve() : reject(new PutError(xhr.status)));
    xhr.onerror = () => reject(new PutError(0));
    xhr.ontimeout = () => reject(new PutError(0));
    const abort = () => xhr.abort();
    signal.addEventListener('abort', abort, { once: true });
    xhr.onabort = () => reject(new Cancelled());
    xhr.send(body);
  });
}

class PutError extends Error {
  constructor(readonly status: number) {
    super(status === 0 ? 'The connection to the file store dropped.' : `The file store answered ${status}.`);
  }
}

async function withRetry<T>(
  what: () => Promise<T>,
  signal: AbortSignal,
  onRetry?: () => void,
  report?: (info: RetryInfo | null) => void,
): Promise<T> {
  for (let attempt = 1; ; attempt++) {
    if (signal.aborted) throw new Cancelled();
    try {
      const out = await what();
      if (attempt > 1) report?.(null);
      return out;
    } catch (err) {
      if ((err as Error).name === 'AbortError') throw err;
      const retriable = err instanceof PutError || (err instanceof ApiError && (err.status === 0 || err.status >= 500));
      if (!retriable || attempt >= MAX_ATTEMPTS) throw err;
      onRetry?.();
      const offline = typeof navigator !== 'undefined' && !navigator.onLine;
      const waitMs = offline ? Math.max(OFFLINE_WAIT_MS, retryDelayMs(attempt)) : retryDelayMs(attempt);
      report?.({ attempt, maxAttempts: MAX_ATTEMPTS, waitMs, reason: (err as Error).message, offline });
      if (offline) await whenOnline(signal, waitMs);
      else await sleep(waitMs, signal);
    }
  }
}

export async function startTicket(input: Omit<UploadInput, 'sha256' | 'signal'>): Promise<UploadTicketDto> {
  return apiFetch<UploadTicketDto>('/api/uploads', {
    method: 'POST',
    json: {
      shiftId: input.shiftId,
      fileName: input.file.name,
      sizeBytes: input.file.size,
      lastModifiedMs: Math.max(0, Math.round(input.file.lastModified)),
      precheck: input.precheck,
      ...(input.replacesRawFileId ? { replacesRawFileId: input.replacesRawFileId } : {}),
    },
  });
}

export async function abortTicket(uploadId: number): Promise<void> {
  await apiFetch(`/api/uploads/${uploadId}/abort`, { method: 'POST' }).catch(() => undefined);
}

/**
 * Sends one file and returns the server's verdict. Throws ApiError for a refusal, an AbortError when cancelled.
 */
export async function uploadFile(
  input: UploadInput,
  cb: UploadCallbacks,
): Promise<{ outcome: UploadOutcomeDto; uploadId: number }> {
  const { file, signal } = input;
  const slots = input.slots ?? new PartSlots(PARALLEL_PARTS);
  const ticket = await withRetry(() => startTicket(input), signal, undefined, cb.onRetry);
  const onAbort = () => void abortTicket(ticket.uploadId);
  signal.addEventListener('abort', onAbort, { once: true });
  try {
    if (ticket.mode === 'single') {
      cb.onPhase('sending');
      let url = ticket.url;
      await withRetry(
        async () => {
          const release = await slots.acquire(signal);
          try {
            await put(url, file, signal, (n) => cb.onProgress(n, file.size));
          } finally {
            release();
          }
        },
        signal,
        // a fresh ticket carries a fresh URL (the old one may have expired while offline)
        () =>
          void startTicket(input).then(
            (t) => {
              if (t.mode === 'single') url = t.url;
            },
            () => undefined, // the next attempt asks again
          ),
        cb.onRetry,
      );
      cb.onProgress(file.size, file.size);
    } else {
      const done = new Set(ticket.partsDone.map((p) => p.partNumber));
      const resumedBytes = ticket.partsDone.reduce((s, p) => s + p.size, 0);
      cb.onPhase('sending', { resumedBytes });
      const todo: number[] = [];
      for (let n = 1; n <= ticket.partCount; n++) if (!done.has(n)) todo.push(n);
      const inFlight = new Map<number, number>();
      let stored = resumedBytes;
      const report = () => {
        let f = 0;
        for (const v of inFlight.values()) f += v;
        cb.onProgress(stored + f, file.size);
      };
      report();
      const urls = new Map<number, PartUrlDto>();
      const urlFor = async (n: number, fresh: boolean): Promise<PartUrlDto> => {
        const have = urls.get(n);
        if (have && !fresh && Date.parse(have.expiresAt) - Date.now() > 60_000) return have;
        const batch = [n, ...todo.filter((m) => m > n && !urls.has(m)).slice(0, URL_BATCH - 1)];
        const r = await apiFetch<{ parts: PartUrlDto[] }>(`/api/uploads/${ticket.uploadId}/parts`, {
          method: 'POST',
          json: { partNumbers: batch },
          signal,
        });
        for (const p of r.parts) urls.set(p.partNumber, p);
        return urls.get(n)!;
      };
      let next = 0;
      const lane = async () => {
        while (next < todo.length) {
          const n = todo[next++]!;
          const range = partRange(file.size, ticket.partSize, n);
          const blob = file.slice(range.start, range.end);
          let fresh = false;
          await withRetry(
            async () => {
              const u = await urlFor(n, fresh);
              const release = await slots.acquire(signal);
              try {
                await put(u.url, blob, signal, (loaded) => {
                  inFlight.set(n, loaded);
                  report();
                });
              } finally {
                release();
              }
            },
            signal,
            () => {
              fresh = true;
              inFlight.delete(n);
              report();
            },
            cb.onRetry,
          );
          inFlight.delete(n);
          stored += range.length;
          report();
        }
      };
      await Promise.all(Array.from({ length: Math.min(PARALLEL_PARTS, todo.length) }, lane));
    }
    cb.onPhase('waiting-hash');
    const sha256 = await input.sha256;
    cb.onPhase('verifying');
    let state = await withRetry(
      () =>
        apiFetch<UploadStateDto>(`/api/uploads/${ticket.uploadId}/complete`, {
          method: 'POST',
          json: sha256 ? { sha256 } : {},
        }),
      signal,
      undefined,
      cb.onRetry,
    );
    // A large file is verified by the server's worker after the completion answered: ask until it is done.
    for (let round = 0; state.state === 'verifying'; round++) {
      await sleep(Math.min(VERDICT_POLL_MAX_MS, VERDICT_POLL_FIRST_MS * 1.5 ** round), signal);
      state = await withRetry(
        () => apiFetch<UploadStateDto>(`/api/uploads/${ticket.uploadId}`, { signal }),
        signal,
        undefined,
        cb.onRetry,
      );
    }
    if (state.state !== 'done') {
      throw new ApiError(`${state.state}:upload`, state.message, state.state === 'failed' ? 400 : 409);
    }
    return { outcome: state as UploadOutcomeDto, uploadId: ticket.uploadId };
  } finally {
    signal.removeEventListener('abort', onAbort);
  }
}
