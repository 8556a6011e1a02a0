/// <reference lib="webworker" />
// The shift page's worker: opens each dropped file with Lobeline's scan-file reader (reduction/hdf5 on h5wasm)
// and computes the file's SHA-256 (WebAssembly, lib/ingest/file-hash.ts), off the main thread so the page stays responsive.
//
// The File is mounted with Emscripten's WORKERFS, so HDF5 reads only the bytes the reader asks for (metadata and
// the first frame) even for a file of many GB; if the mount fails the bytes are copied into the in-memory FS.
import * as h5wasm from 'h5wasm';
import { createChunkHasher } from '@/lib/ingest/file-hash';
import { histogramEvents, spectrometerAu } from '@/reduction/events/kinematics';
import { DEFAULT_EVENT_SETTINGS, parseSettings } from '@/reduction/formats';
import { cartesianGrid } from '@/reduction/grids';
import { type EventScanFile, openScanOrEvents, openScanOrEventsBytes } from '@/reduction/hdf5/event-reader';
import { type H5Runtime, runtimeFrom } from '@/reduction/hdf5/runtime';
import { saturationWarning } from '@/reduction/saturation';
import type { PrecheckPreview, PrecheckResult, WorkerReply, WorkerRequest } from './precheck-protocol';

const scope = self as unknown as DedicatedWorkerGlobalScope;
let runtime: Promise<H5Runtime> | null = null;
const rt = () => (runtime ??= runtimeFrom(h5wasm));

const PREVIEW_MAX = 160;
/** Events of step 0 histogrammed for the preview of an event file (the reader reads them as one chunk). */
const PREVIEW_EVENTS = 200_000;
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
  let opened: ReturnType<typeof openScanOrEvents>;
  let mounted = false;
  try {
    FS.mkdir(dir);
    FS.mount(FS.filesystems.WORKERFS, { files: [file] }, dir);
    mounted = true;
    opened = openScanOrEvents(r, `${dir}/${file.name}`);
  } catch {
    access = 'whole';
    opened = openScanOrEventsBytes(r, new Uint8Array(await file.arrayBuffer()), `/scratch-${id}.h5`);
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
    if (opened.kind === 'events') return eventPrecheck(opened.scan, opened.warnings, access, t0);
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

/** Summary and preview of an event file: counts, steps, spectrometer, and the first events on the default grid. */
function eventPrecheck(
  scan: EventScanFile,
  readerWarnings: string[],
  access: PrecheckResult['access'],
  t0: number,
): PrecheckResult {
  const m = scan.meta;
  const ev = scan.events;
  const problems: string[] = [];
  const warnings = [...readerWarnings];
  let pv: PrecheckPreview | null = null;
  const previewEvents = Math.min(PREVIEW_EVENTS, ev.stepEvents[0] ?? 0);
  try {
    const settings = parseSettings({});
    if (!settings.ok) throw new Error(settings.problems.join('; '));
    const grid = cartesianGrid(settings.value);
    const hist = new Float64Array(grid.n * grid.n);
    const chunk = scan.readEvents(ev.stepStart[0] ?? 0, previewEvents);
    const tally = histogramEvents(
      chunk.x,
      chunk.y,
      chunk.tof,
      {
        spectrometer: spectrometerAu(ev.spectrometer),
        laserAxis: DEFAULT_EVENT_SETTINGS.laser_axis,
        gateAu: DEFAULT_EVENT_SETTINGS.gate_au?.range ?? null,
      },
      grid,
      hist,
    );
    pv = preview(hist, grid.n, grid.n);
    if (tally.invalid > previewEvents / 10) {
      warnings.push(
        `First events: ${tally.invalid} of ${previewEvents} have no valid momentum with the file's spectrometer values (flight time not after t₀?); a calibration can override them.`,
      );
    }
  } catch (err) {
    problems.push((err as { problem?: { message: string } }).problem?.message ?? String(err));
  } finally {
    scan.close();
  }
  const sp = ev.spectrometer;
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
      nY: null,
      nX: null,
      startTime: m.startTime,
      countsDtype: ev.dtypes.x,
      events: {
        count: ev.nEvents,
        perStep: ev.stepEvents.slice(0, 4096),
        spectrometer: { ...sp, detector_center_mm: [sp.detector_center_mm[0], sp.detector_center_mm[1]] },
        previewEvents,
      },
    },
    preview: pv,
    access,
    ms: performance.now() - t0,
  };
}

async function hash(id: number, file: File): Promise<string> {
  const h = await createChunkHasher();
  let last = 0;
  const read = (at: number) => file.slice(at, Math.min(file.size, at + HASH_CHUNK)).arrayBuffer();
  // the next chunk is read from disk while this one is hashed
  let next = file.size > 0 ? read(0) : null;
  for (let at = 0; at < file.size; at += HASH_CHUNK) {
    const chunk = new Uint8Array(await next!);
    next = at + HASH_CHUNK < file.size ? read(at + HASH_CHUNK) : null;
    h.update(chunk);
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
