/// <reference lib="webworker" />
// The shift page's worker: opens each dropped file with Lobeline's scan-file reader (reduction/hdf5 on h5wasm)
// and computes the file's SHA-256, off the main thread so the page stays responsive.
//
// The File is mounted with Emscripten's WORKERFS, so HDF5 reads only the bytes the reader asks for (metadata and
// the first frame) even for a file of many GB; if the mount fails the bytes are copied into the in-memory FS.
import * as h5wasm from 'h5wasm';
import { Sha256 } from '@/lib/ingest/sha256';
import { openScanBytes, openScanFile } from '@/reduction/hdf5/reader';
import { type H5Runtime, runtimeFrom } from '@/reduction/hdf5/runtime';
import { saturationWarning } from '@/reduction/saturation';
import type { PrecheckPreview, PrecheckResult, WorkerReply, WorkerRequest } from './precheck-protocol';

const scope = self as unknown as DedicatedWorkerGlobalScope;
let runtime: Promise<H5Runtime> | null = null;
const rt = () => (runtime ??= runtimeFrom(h5wasm));

const PREVIEW_MAX = 160;
const HASH_CHUNK = 8 * 1024 * 1024;

function preview(frame: Float64Array, nY: number, nX: number): PrecheckPreview {
  const f = Math.max(1, Math.ceil(Math.max(nX, nY) / PREVIEW_MAX));
  const width = Math.ceil(nX / f);
  const height = Math.ceil(nY / f);
  const pixels = new Float32Array(width * height);
  let total = 0;
  for (let y = 0; y < nY; y++) {
    const row = y * nX;
    const out = Math.floor(y / f) * width;
    for (let x = 0; x < nX; x++) {
      const v = frame[row + x]!;
      total += v;
      pixels[out + Math.floor(x / f)]! += v;
    }
  }
  let max = 0;
  for (const v of pixels) if (v > max) max = v;
  return { pixels, width, height, totalCounts: total, max };
}

type FsWithWorkerfs = H5Runtime['Module']['FS'] & {
  filesystems: Record<string, unknown>;
  mount(type: unknown, opts: { files: File[] }, dir: string): void;
  unmount(dir: string): void;
};

async function precheck(id: number, file: File): Promise<PrecheckResult> {
  const t0 = performance.now();
  const r = await rt();
  const FS = r.Module.FS as FsWithWorkerfs;
  const dir = `/drop-${id}`;
  let access: PrecheckResult['access'] = 'lazy';
  let opened: ReturnType<typeof openScanFile>;
  let mounted = false;
  try {
    FS.mkdir(dir);
    FS.mount(FS.filesystems.WORKERFS, { files: [file] }, dir);
    mounted = true;
    opened = openScanFile(r, `${dir}/${file.name}`);
  } catch {
    access = 'whole';
    opened = openScanBytes(r, new Uint8Array(await file.arrayBuffer()), `/scratch-${id}.h5`);
  }
  try {
    if (!opened.ok) {
      return {
        ok: false,
        problems: opened.problems.map((p) => p.message),
        warnings: opened.warnings,
        summary: null,
        preview: null,
        access,
        ms: performance.now() - t0,
      };
    }
    const scan = opened.scan;
    const m = scan.meta;
    const problems: string[] = [];
    let pv: PrecheckPreview | null = null;
    const warnings = [...opened.warnings];
    try {
      const first = scan.readFrame(0);
      pv = preview(first, m.shape.nY, m.shape.nX);
      const saturated = saturationWarning(first, m.countsDtype);
      if (saturated !== null) warnings.push(`First frame: ${saturated}`);
    } catch (err) {
      problems.push((err as { problem?: { message: string } }).problem?.message ?? String(err));
    } finally {
      scan.close();
    }
    return {
      ok: problems.length === 0,
      problems,
      warnings,
      summary: {
        experimentKind: m.experimentKind,
        target: m.target,
        wavelengthNm: m.wavelengthNm,
        ellipticity: m.ellipticity,
        stepQuantity: m.step.quantity,
        stepUnits: m.step.units,
        stepValues: m.step.values.slice(0, 4096),
        nSteps: m.shape.nStep,
        nY: m.shape.nY,
        nX: m.shape.nX,
        startTime: m.startTime,
        countsDtype: m.countsDtype,
      },
      preview: pv,
      access,
      ms: performance.now() - t0,
    };
  } finally {
    if (mounted) {
      try {
        FS.unmount(dir);
        FS.rmdir(dir);
      } catch {
        // a later drop uses another directory
      }
    }
  }
}

async function hash(id: number, file: File): Promise<string> {
  const h = new Sha256();
  let last = 0;
  for (let at = 0; at < file.size; at += HASH_CHUNK) {
    h.update(new Uint8Array(await file.slice(at, Math.min(file.size, at + HASH_CHUNK)).arrayBuffer()));
    const now = performance.now();
    if (now - last > 200) {
      last = now;
      post({ op: 'hash-progress', id, bytes: Math.min(file.size, at + HASH_CHUNK) });
    }
  }
  return h.hex();
}

function post(msg: WorkerReply, transfer: Transferable[] = []): void {
  scope.postMessage(msg, transfer);
}

scope.onmessage = async (ev: MessageEvent<WorkerRequest>) => {
  const msg = ev.data;
  try {
    if (msg.op === 'precheck') {
      const result = await precheck(msg.id, msg.file);
      post({ op: 'precheck', id: msg.id, result }, result.preview ? [result.preview.pixels.buffer] : []);
    } else {
      post({ op: 'hash', id: msg.id, sha256: await hash(msg.id, msg.file) });
    }
  } catch (err) {
    post({ op: 'error', id: msg.id, message: err instanceof Error ? err.message : String(err) });
  }
};
