/// <reference lib="webworker" />
// Bench-only web worker for scripts/bench/n3-browser-sha256.ts: hashes a File with lib/ingest/file-hash.ts in the
// same 8 MiB chunks (with read-ahead) as components/ingest/precheck.worker.ts, and reports the time it took.
import { createChunkHasher } from '@/lib/ingest/file-hash';

const scope = self as unknown as DedicatedWorkerGlobalScope;
const CHUNK = 8 * 1024 * 1024;

scope.onmessage = async (ev: MessageEvent<{ file: File; engine: 'wasm' | 'js' }>) => {
  const { file, engine } = ev.data;
  const t0 = performance.now();
  const h = await createChunkHasher(engine);
  const read = (at: number) => file.slice(at, Math.min(file.size, at + CHUNK)).arrayBuffer();
  let next = file.size > 0 ? read(0) : null;
  for (let at = 0; at < file.size; at += CHUNK) {
    const chunk = new Uint8Array(await next!);
    next = at + CHUNK < file.size ? read(at + CHUNK) : null;
    h.update(chunk);
  }
  scope.postMessage({ sha256: h.hex(), ms: performance.now() - t0, engine: h.engine });
};
