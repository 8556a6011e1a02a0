// Arrays of a stored result file (FORMATS §5) for the scan page: a calibrated momentum image of one step, a phase
// map, or a step's angular/radial distribution. The derived object is copied from S3 to a local cache file once per
// result (streamed), read with h5wasm one dataset slice at a time, downsampled by block sums (images) and kept in a
// small in-memory cache. Both caches are keyed by the stored object itself (bucket, key and the storage service's
// ETag and size), never by the result id alone: result ids start again at 1 in every database (a demo reset, the
// test instance beside the dev one), and the cache folder under the OS temp folder outlives them all, so an id-keyed
// cache served another database's result file (a phase scan then "had no entry/result/phase/px"). Node only (used
// by route handlers).
import { createHash } from 'node:crypto';
import { createWriteStream } from 'node:fs';
import { mkdir, rename, rm, stat } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { pipeline } from 'node:stream/promises';
import { AppError } from '@/lib/errors';
import { getObjectStream, headObject } from '@/lib/storage/s3';
import { loadH5wasmNode } from '@/reduction/hdf5/node';

export const IMAGE_KINDS = ['calibrated', 'mean', 'amplitude', 'phase_of_max', 'contrast'] as const;
export type ImageKind = (typeof IMAGE_KINDS)[number];

export interface ImagePayload {
  kind: ImageKind;
  step: number | null;
  /** Columns (px) and rows (py) of the returned image, row-major [py][px], py increasing with the row index. */
  nx: number;
  ny: number;
  /** Cell-centre momentum range of the returned image, a.u. */
  pxRange: [number, number];
  pyRange: [number, number];
  /** Block size of the downsampling (1 = full resolution). */
  binning: number;
  units: string;
  /** How cells were combined: sums for counts, means for maps. */
  combine: 'sum' | 'mean';
  min: number;
  max: number;
  /** Float32 little-endian, base64. */
  data: string;
}

export interface CurvesPayload {
  step: number;
  thetaDeg: number[];
  angular: number[];
  pAu: number[];
  radial: number[];
}

const CACHE_DIR = path.join(tmpdir(), 'lobeline-derived-cache');
const MEMORY_ENTRIES = 64;
// On globalThis so that every route bundle of the server process shares one cache.
type Caches = { memory: Map<string, unknown>; downloads: Map<string, Promise<string>> };
const g = globalThis as typeof globalThis & { __lobelineResultArrays?: Caches };
if (!g.__lobelineResultArrays) g.__lobelineResultArrays = { memory: new Map(), downloads: new Map() };
const caches: Caches = g.__lobelineResultArrays;
const memory = caches.memory;
const downloads = caches.downloads;

function remember<T>(key: string, value: T): T {
  memory.delete(key);
  memory.set(key, value);
  while (memory.size > MEMORY_ENTRIES) {
    const first = memory.keys().next().value;
    if (first === undefined) break;
    memory.delete(first);
  }
  return value;
}

/**
 * The identity of a stored result file: a digest of bucket, key, ETag and size (a HEAD request). Two different
 * objects, or the same key rewritten with other bytes, never share it.
 */
async function objectIdentity(bucket: string, key: string): Promise<string> {
  const head = await headObject(bucket, key).catch((err: unknown) => {
    if (err instanceof AppError && err.code === 'not_found:storage') {
      throw new AppError('not_found:reduction', {
        message: 'The stored result file of this scan is missing; reduce the scan again to rebuild it.',
        cause: err,
      });
    }
    throw err;
  });
  return createHash('sha256')
    .update(`${bucket}\n${key}\n${head.etag ?? ''}\n${head.size}`)
    .digest('hex')
    .slice(0, 32);
}

/** Local copy of a result file (downloaded once per identity, then reused). */
async function localCopy(identity: string, bucket: string, key: string): Promise<string> {
  const file = path.join(CACHE_DIR, `result-${identity}.h5`);
  try {
    if ((await stat(file)).size > 0) return file;
  } catch {
    // not cached yet
  }
  const running = downloads.get(file);
  if (running) return running;
  const p = (async () => {
    await mkdir(CACHE_DIR, { recursive: true });
    const part = `${file}.${process.pid}.${Date.now()}.part`;
    try {
      const { body } = await getObjectStream(bucket, key);
      await pipeline(body, createWriteStream(part));
      await rename(part, file);
      return file;
    } catch (err) {
      await rm(part, { force: true });
      throw err;
    }
  })();
  downloads.set(file, p);
  try {
    return await p;
  } finally {
    downloads.delete(file);
  }
}

type H5File = InstanceType<Awaited<ReturnType<typeof loadH5wasmNode>>['File']>;

async function withFile<T>(identity: string, bucket: string, key: string, fn: (f: H5File) => T): Promise<T> {
  const local = await localCopy(identity, bucket, key);
  const rt = await loadH5wasmNode();
  let f: H5File;
  try {
    f = new rt.File(local, 'r');
  } catch (err) {
    await rm(local, { force: true });
    throw new AppError('internal:reduction', { message: 'The stored result file could not be opened.', cause: err });
  }
  try {
    return fn(f);
  } finally {
    f.close();
  }
}

function dataset(f: H5File, p: string) {
  const d = f.get(p) as { shape?: number[] | null; slice?: (r: number[][]) => unknown; value?: unknown } | null;
  if (!d || typeof d.slice !== 'function') {
    throw new AppError('not_found:reduction', { message: `The result file has no ${p}.` });
  }
  return d as { shape: number[]; slice: (r: number[][]) => ArrayLike<number>; value: ArrayLike<number> };
}

function toBase64(a: Float32Array): string {
  return Buffer.from(a.buffer, a.byteOffset, a.byteLength).toString('base64');
}

/** Block-downsamples a [ny][nx] image so that neither side exceeds `maxSide`. */
export function downsample(
  src: ArrayLike<number>,
  nx: number,
  ny: number,
  maxSide: number,
  combine: 'sum' | 'mean',
): { data: Float32Array; nx: number; ny: number; binning: number } {
  const b = Math.max(1, Math.ceil(Math.max(nx, ny) / maxSide));
  const ox = Math.ceil(nx / b);
  const oy = Math.ceil(ny / b);
  const out = new Float32Array(ox * oy);
  const cnt = new Uint16Array(ox * oy);
  for (let y = 0; y < ny; y++) {
    const row = Math.floor(y / b) * ox;
    for (let x = 0; x < nx; x++) {
      const v = src[y * nx + x] as number;
      if (!Number.isFinite(v)) continue;
      const i = row + Math.floor(x / b);
      out[i] = (out[i] as number) + v;
      cnt[i] = (cnt[i] as number) + 1;
    }
  }
  if (combine === 'mean' || b > 1) {
    for (let i = 0; i < out.length; i++) {
      const c = cnt[i] as number;
      if (c === 0) out[i] = Number.NaN;
      else if (combine === 'mean') out[i] = (out[i] as number) / c;
    }
  }
  return { data: out, nx: ox, ny: oy, binning: b };
}

/**
 * One image of a result: the calibrated momentum image of `step`, or a phase map.
 *
 * @param maxSide - longest side of the returned image (cells are block-combined to fit)
 */
export async function readResultImage(input: {
  resultId: number;
  bucket: string;
  key: string;
  kind: ImageKind;
  step: number;
  maxSide: number;
}): Promise<ImagePayload> {
  const id = await objectIdentity(input.bucket, input.key);
  const cacheKey = `img:${id}:${input.kind}:${input.kind === 'calibrated' ? input.step : '-'}:${input.maxSide}`;
  const hit = memory.get(cacheKey) as ImagePayload | undefined;
  if (hit) return remember(cacheKey, hit);
  const payload = await withFile(id, input.bucket, input.key, (f) => {
    const group = input.kind === 'calibrated' ? 'entry/result/calibrated' : 'entry/result/phase';
    const px = Array.from(dataset(f, `${group}/px`).value);
    const py = Array.from(dataset(f, `${group}/py`).value);
    const nx = px.length;
    const ny = py.length;
    let raw: ArrayLike<number>;
    let units = 'counts';
    if (input.kind === 'calibrated') {
      const d = dataset(f, `${group}/counts`);
      const nStep = d.shape[0] ?? 0;
      if (input.step < 0 || input.step >= nStep) {
        throw new AppError('bad_request:api', { message: `There is no step ${input.step} (the scan has ${nStep}).` });
      }
      raw = d.slice([[input.step, input.step + 1], [], []]);
    } else {
      raw = dataset(f, `${group}/${input.kind}`).value;
      units = input.kind === 'phase_of_max' ? 'rad' : input.kind === 'contrast' ? '1' : 'counts';
    }
    const combine: 'sum' | 'mean' =
      input.kind === 'calibrated' || input.kind === 'mean' || input.kind === 'amplitude' ? 'sum' : 'mean';
    // Phase is cyclic: averaging angles across a block would be wrong, so phase maps keep every b-th cell instead.
    const ds =
      input.kind === 'phase_of_max'
        ? decimate(raw, nx, ny, input.maxSide)
        : downsample(raw, nx, ny, input.maxSide, combine);
    let min = Number.POSITIVE_INFINITY;
    let max = Number.NEGATIVE_INFINITY;
    for (const v of ds.data) {
      if (!Number.isFinite(v)) continue;
      if (v < min) min = v;
      if (v > max) max = v;
    }
    const b = ds.binning;
    const centre = (axis: number[], i0: number, n: number) => {
      const lo = i0 * b;
      const hi = Math.min(n, lo + b) - 1;
      return ((axis[lo] as number) + (axis[hi] as number)) / 2;
    };
    return {
      kind: input.kind,
      step: input.kind === 'calibrated' ? input.step : null,
      nx: ds.nx,
      ny: ds.ny,
      pxRange: [centre(px, 0, nx), centre(px, ds.nx - 1, nx)] as [number, number],
      pyRange: [centre(py, 0, ny), centre(py, ds.ny - 1, ny)] as [number, number],
      binning: b,
      units,
      combine: input.kind === 'phase_of_max' ? ('mean' as const) : combine,
      min: Number.isFinite(min) ? min : 0,
      max: Number.isFinite(max) ? max : 0,
      data: toBase64(ds.data),
    };
  });
  return remember(cacheKey, payload);
}

function decimate(src: ArrayLike<number>, nx: number, ny: number, maxSide: number) {
  const b = Math.max(1, Math.ceil(Math.max(nx, ny) / maxSide));
  const ox = Math.ceil(nx / b);
  const oy = Math.ceil(ny / b);
  const out = new Float32Array(ox * oy);
  for (let y = 0; y < oy; y++) {
    for (let x = 0; x < ox; x++) {
      const sy = Math.min(ny - 1, y * b + (b >> 1));
      const sx = Math.min(nx - 1, x * b + (b >> 1));
      out[y * ox + x] = src[sy * nx + sx] as number;
    }
  }
  return { data: out, nx: ox, ny: oy, binning: b };
}

/** The angular and radial distributions of one step. */
export async function readResultCurves(input: {
  resultId: number;
  bucket: string;
  key: string;
  step: number;
}): Promise<CurvesPayload> {
  const id = await objectIdentity(input.bucket, input.key);
  const cacheKey = `curves:${id}:${input.step}`;
  const hit = memory.get(cacheKey) as CurvesPayload | undefined;
  if (hit) return remember(cacheKey, hit);
  const payload = await withFile(id, input.bucket, input.key, (f) => {
    const ang = dataset(f, 'entry/result/angular/yield');
    const nStep = ang.shape[0] ?? 0;
    if (input.step < 0 || input.step >= nStep) {
      throw new AppError('bad_request:api', { message: `There is no step ${input.step} (the scan has ${nStep}).` });
    }
    return {
      step: input.step,
      thetaDeg: Array.from(dataset(f, 'entry/result/angular/theta').value),
      angular: Array.from(ang.slice([[input.step, input.step + 1], []])),
      pAu: Array.from(dataset(f, 'entry/result/radial/p').value),
      radial: Array.from(dataset(f, 'entry/result/radial/yield').slice([[input.step, input.step + 1], []])),
    };
  });
  return remember(cacheKey, payload);
}

/** Yield of a rectangle of the calibrated images of every step (for the yield-versus-phase curve of a drawn region). */
export async function readRegionYield(input: {
  resultId: number;
  bucket: string;
  key: string;
  px: [number, number];
  py: [number, number];
}): Promise<{ yields: number[]; cells: number }> {
  const id = await objectIdentity(input.bucket, input.key);
  return withFile(id, input.bucket, input.key, (f) => {
    const px = Array.from(dataset(f, 'entry/result/calibrated/px').value);
    const py = Array.from(dataset(f, 'entry/result/calibrated/py').value);
    const d = dataset(f, 'entry/result/calibrated/counts');
    const nStep = d.shape[0] ?? 0;
    const xs = px.flatMap((v, i) => (v >= input.px[0] && v <= input.px[1] ? [i] : []));
    const ys = py.flatMap((v, i) => (v >= input.py[0] && v <= input.py[1] ? [i] : []));
    if (!xs.length || !ys.length) return { yields: new Array<number>(nStep).fill(0), cells: 0 };
    const x0 = xs[0] as number;
    const x1 = (xs[xs.length - 1] as number) + 1;
    const y0 = ys[0] as number;
    const y1 = (ys[ys.length - 1] as number) + 1;
    const yields: number[] = [];
    for (let k = 0; k < nStep; k++) {
      const block = d.slice([
        [k, k + 1],
        [y0, y1],
        [x0, x1],
      ]);
      let sum = 0;
      for (let i = 0; i < block.length; i++) {
        const v = block[i] as number;
        if (Number.isFinite(v)) sum += v;
      }
      yields.push(sum);
    }
    return { yields, cells: (x1 - x0) * (y1 - y0) };
  });
}
