'use client';
// State of the files dropped on the shift page: pre-check, hash, upload, verdict. Nothing leaves the list on its
// own: a file is either sent, or stays with the reason it was not.
import { useCallback, useEffect, useRef, useState } from 'react';
import { ApiError, apiFetch } from '@/lib/api/client';
import type { StoredMatchDto } from '@/lib/ingest/lookup';
import { PARALLEL_PARTS } from '@/lib/ingest/plan';
import type { Precheck } from '@/lib/ingest/schemas';
import type { UploadOutcomeDto } from '@/lib/ingest/types';
import { attentionFor, type CampaignFacts } from './attention';
import { FileChecker } from './precheck-client';
import type { PrecheckResult } from './precheck-protocol';
import { PartSlots, type RetryInfo, uploadFile } from './uploader';

export type ItemPhase =
  | 'checking'
  | 'ready'
  | 'queued'
  | 'sending'
  | 'waiting-hash'
  | 'verifying'
  | 'done'
  | 'failed'
  | 'cancelled';

export interface QueueItem {
  key: string;
  file: File;
  replacesRawFileId?: number;
  precheck: PrecheckResult | null;
  precheckError: string | null;
  /** Send this file even though the pre-check found problems (it will be quarantined). */
  sendAnyway: boolean;
  /** The operator confirmed what attention.ts points out (campaign mismatch, duplicate). */
  confirmed: boolean;
  /** The stored file with the same SHA-256 (undefined: not asked yet; null: none). */
  storedMatch?: StoredMatchDto | null;
  phase: ItemPhase;
  loaded: number;
  resumedBytes: number;
  hashBytes: number;
  sha256: string | null;
  outcome: UploadOutcomeDto | null;
  error: { message: string; details: string[] } | null;
  /** The last request failed and is being tried again (cleared when a request goes through). */
  retry: (RetryInfo & { at: number }) | null;
  startedAt: number | null;
}

export interface BatchStats {
  total: number;
  loaded: number;
  bytesPerSecond: number;
  secondsLeft: number;
  active: boolean;
}

function toPrecheck(r: PrecheckResult | null): Precheck | null {
  if (!r) return null;
  const s = r.summary;
  return {
    ok: r.ok,
    problems: r.problems.slice(0, 200).map((p) => p.slice(0, 2000)),
    warnings: r.warnings.slice(0, 200).map((p) => p.slice(0, 2000)),
    summary: s
      ? {
          experimentKind: s.experimentKind,
          target: s.target,
          wavelengthNm: s.wavelengthNm,
          ellipticity: s.ellipticity,
          stepQuantity: s.stepQuantity,
          nSteps: s.nSteps,
          nY: s.nY,
          nX: s.nX,
          startTime: s.startTime,
        }
      : null,
  };
}

/** Files of a batch sent at the same time. */
const FILES_AT_ONCE = 2;

export function useIngestQueue({
  shiftId,
  onStored,
  campaign = null,
}: {
  shiftId: number;
  onStored: () => void;
  campaign?: CampaignFacts | null;
}) {
  const [items, setItems] = useState<QueueItem[]>([]);
  const itemsRef = useRef(items);
  itemsRef.current = items;
  const campaignRef = useRef(campaign);
  campaignRef.current = campaign;
  /** Ready, readable (or sent anyway) and, where something needs a word, confirmed by the operator. */
  const isSendable = useCallback(
    (i: QueueItem, _index?: number, list: QueueItem[] = itemsRef.current) =>
      i.phase === 'ready' &&
      (i.precheck?.ok === true || i.sendAnyway) &&
      (i.confirmed || attentionFor(i, list, campaignRef.current).length === 0),
    [],
  );
  const checker = useRef<FileChecker | null>(null);
  const controllers = useRef(new Map<string, AbortController>());
  const hashes = useRef(new Map<string, Promise<string | null>>());
  /** Keys of the files being sent now (the items' phases reach the ref only after the next render). */
  const sending = useRef(new Set<string>());
  const slots = useRef(new PartSlots(PARALLEL_PARTS));
  const samples = useRef<{ t: number; loaded: number }[]>([]);
  const [stats, setStats] = useState<BatchStats>({
    total: 0,
    loaded: 0,
    bytesPerSecond: 0,
    secondsLeft: Number.NaN,
    active: false,
  });

  useEffect(() => () => checker.current?.terminate(), []);

  const patch = useCallback((key: string, p: Partial<QueueItem> | ((i: QueueItem) => Partial<QueueItem>)) => {
    setItems((list) => list.map((i) => (i.key === key ? { ...i, ...(typeof p === 'function' ? p(i) : p) } : i)));
  }, []);

  const addFiles = useCallback(
    (files: File[], replacesRawFileId?: number) => {
      const fresh: QueueItem[] = files.map((file) => ({
        key: `${file.name}:${file.size}:${file.lastModified}:${Math.random().toString(36).slice(2, 8)}`,
        file,
        replacesRawFileId,
        precheck: null,
        precheckError: null,
        sendAnyway: false,
        confirmed: false,
        phase: 'checking',
        loaded: 0,
        resumedBytes: 0,
        hashBytes: 0,
        sha256: null,
        outcome: null,
        error: null,
        retry: null,
        startedAt: null,
      }));
      setItems((list) => [...list, ...fresh]);
      checker.current ??= new FileChecker();
      const c = checker.current;
      for (const item of fresh) {
        c.precheck(item.file).then(
          (r) => patch(item.key, { precheck: r, phase: 'ready' }),
          (err: Error) =>
            patch(item.key, {
              precheckError: `The file could not be opened in the browser: ${err.message}`,
              phase: 'ready',
            }),
        );
        // The hash runs while the file is checked and sent; the server compares it with its own.
        hashes.current.set(
          item.key,
          c
            .sha256(item.file, (bytes) => patch(item.key, { hashBytes: bytes }))
            .then(
              (h) => {
                patch(item.key, { sha256: h, hashBytes: item.file.size });
                // Already stored? Asked before sending, so the panel can say so (a failed question says nothing).
                apiFetch<{ matches: StoredMatchDto[] }>(`/api/shifts/${shiftId}/stored?sha256=${h}`).then(
                  (r) => patch(item.key, { storedMatch: r.matches.find((m) => m.sha256 === h) ?? null }),
                  () => undefined,
                );
                return h;
              },
              () => null,
            ),
        );
      }
    },
    [patch, shiftId],
  );

  /** Sends one queued file; resolves when it has its verdict, failed or was cancelled. */
  const sendOne = useCallback(
    async (next: QueueItem) => {
      const ctrl = new AbortController();
      controllers.current.set(next.key, ctrl);
      patch(next.key, { phase: 'sending', startedAt: Date.now(), error: null, retry: null });
      try {
        const { outcome } = await uploadFile(
          {
            file: next.file,
            shiftId,
            precheck: toPrecheck(next.precheck),
            replacesRawFileId: next.replacesRawFileId,
            sha256: hashes.current.get(next.key) ?? Promise.resolve(null),
            signal: ctrl.signal,
            slots: slots.current,
          },
          {
            onProgress: (loaded) => patch(next.key, { loaded }),
            onPhase: (phase, info) =>
              patch(next.key, (i) => ({ phase, resumedBytes: info?.resumedBytes ?? i.resumedBytes })),
            onRetry: (info) => patch(next.key, { retry: info ? { ...info, at: Date.now() } : null }),
          },
        );
        patch(next.key, { phase: 'done', outcome, loaded: next.file.size, retry: null });
        onStored();
      } catch (err) {
        if ((err as Error).name === 'AbortError') patch(next.key, { phase: 'cancelled', retry: null });
        else {
          const e =
            err instanceof ApiError
              ? { message: err.message, details: err.details }
              : { message: String((err as Error).message ?? err), details: [] };
          patch(next.key, { phase: 'failed', error: e, retry: null });
        }
        onStored();
      } finally {
        controllers.current.delete(next.key);
      }
    },
    [patch, shiftId, onStored],
  );

  // Up to FILES_AT_ONCE files are sent at the same time; their PUTs share the PARALLEL_PARTS slots.
  const pump = useCallback(() => {
    for (;;) {
      if (sending.current.size >= FILES_AT_ONCE) return;
      const next = itemsRef.current.find((i) => i.phase === 'queued' && !sending.current.has(i.key));
      if (!next) return;
      sending.current.add(next.key);
      void sendOne(next).finally(() => {
        sending.current.delete(next.key);
        // the state has settled once the next render ran; pick the next queued file then
        setTimeout(() => pump(), 0);
      });
    }
  }, [sendOne]);

  const sendAll = useCallback(() => {
    setItems((list) => list.map((i) => (isSendable(i, 0, list) ? { ...i, phase: 'queued' } : i)));
    setTimeout(() => pump(), 0);
  }, [pump, isSendable]);

  const retry = useCallback(
    (key: string) => {
      patch(key, { phase: 'queued', error: null });
      setTimeout(() => pump(), 0);
    },
    [patch, pump],
  );

  const cancel = useCallback(
    (key: string) => {
      const ctrl = controllers.current.get(key);
      if (ctrl) ctrl.abort();
      else patch(key, (i) => (i.phase === 'queued' ? { phase: 'ready' } : {}));
    },
    [patch],
  );

  const remove = useCallback((key: string) => setItems((list) => list.filter((i) => i.key !== key)), []);
  const setSendAnyway = useCallback((key: string, v: boolean) => patch(key, { sendAnyway: v }), [patch]);
  const setConfirmed = useCallback((key: string, v: boolean) => patch(key, { confirmed: v }), [patch]);

  // batch speed and time left from the last ~5 s of progress
  useEffect(() => {
    const timer = setInterval(() => {
      const list = itemsRef.current.filter((i) =>
        ['queued', 'sending', 'waiting-hash', 'verifying', 'done'].includes(i.phase),
      );
      const inBatch = list.filter((i) => i.phase !== 'done' || (i.startedAt ?? 0) > Date.now() - 3_600_000);
      const total = inBatch.reduce((s, i) => s + i.file.size, 0);
      const loaded = inBatch.reduce((s, i) => s + Math.min(i.file.size, i.loaded), 0);
      const active = inBatch.some((i) => i.phase !== 'done');
      const now = Date.now();
      const sent = inBatch.reduce((s, i) => s + Math.max(0, Math.min(i.file.size, i.loaded) - i.resumedBytes), 0);
      samples.current.push({ t: now, loaded: sent });
      samples.current = samples.current.filter((s) => s.t > now - 5_000);
      const first = samples.current[0];
      const rate = first && now > first.t ? ((sent - first.loaded) / (now - first.t)) * 1000 : 0;
      setStats({
        total,
        loaded,
        bytesPerSecond: active ? rate : 0,
        secondsLeft: rate > 0 ? (total - loaded) / rate : Number.NaN,
        active,
      });
    }, 500);
    return () => clearInterval(timer);
  }, []);

  return {
    items,
    stats,
    addFiles,
    sendAll,
    retry,
    cancel,
    remove,
    setSendAnyway,
    setConfirmed,
    isSendable,
    campaign,
  };
}

export type IngestQueue = ReturnType<typeof useIngestQueue>;
