/// <reference lib="dom" />
// Bench-only page script for scripts/bench/bench-latency.ts: a synthetic raw frame from the project's forward model
// (reduction/synth), the calibration bench's own coalescing channel (components/bench/channel.ts) to the bench's
// own web worker (components/bench/bench.worker.ts, bundled beside it), and the calibrated image drawn on a canvas
// the way the page's heatmap paints it. Latency = control change → the answer's image painted and a frame
// presented (requestAnimationFrame after the paint).
import { BenchChannel } from '@/components/bench/channel';
import type { BenchFrame, BenchRequest } from '@/components/bench/compute';
import { analysisSettingsSchema, type ScanMetadata } from '@/reduction/formats';
import { planScan, renderSignal, type ScanPlan } from '@/reduction/synth/model';

interface Drawn {
  latencyMs: number;
  workerMs: number;
}

function paint(ctx: CanvasRenderingContext2D, img: Float32Array, n: number): void {
  let hi = 0;
  for (const v of img) if (v > hi) hi = v;
  const data = ctx.createImageData(n, n);
  for (let i = 0; i < n * n; i++) {
    const t = Math.round((255 * (img[i] as number)) / (hi || 1));
    data.data[4 * i] = t;
    data.data[4 * i + 1] = t;
    data.data[4 * i + 2] = 255 - t;
    data.data[4 * i + 3] = 255;
  }
  ctx.putImageData(data, 0, 0);
}

/** What the file reader would hand over for the forward model's scan (reduction/synth/scan-file.ts writes it). */
function metaOf(plan: ScanPlan): ScanMetadata {
  const o = plan.options;
  const nStep = plan.steps.length;
  return {
    experimentKind: o.kind,
    startTime: '2026-03-14T09:30:00+01:00',
    title: 'Harbor Point bench frame',
    target: o.target,
    ionizationEnergyEv: null,
    wavelengthNm: o.wavelengthNm,
    ellipticity: o.ellipticity,
    helicity: o.helicity as 1 | -1,
    majorAxisAngleDeg: o.majorAxisDeg,
    fieldRatio: null,
    relativePhaseRad: 0,
    pulseDurationFs: null,
    intensityConvention: 'cycle_averaged_total',
    delaySign: -1,
    detectorDescription: null,
    nominalMomentumPerPixelAu: null,
    shape: { nStep, nY: o.size, nX: o.size },
    countsIs3d: nStep > 1,
    countsDtype: 'float32',
    step: { quantity: plan.stepQuantity, units: plan.stepUnits, values: plan.stepValues },
    shots: plan.shots,
    xAxis: null,
    yAxis: null,
    background: null,
    events: null,
    extraPaths: [],
  };
}

function makeFrame(size: number, steps: number, seed: number) {
  const plan = planScan({ size, steps, distort: true, counts: 2e5, seed });
  return { plan, meta: metaOf(plan) };
}

async function latency(o: { size: number; factor: number; changes: number; intervalMs: number }) {
  const { plan, meta } = makeFrame(o.size, 1, 1);
  const counts = renderSignal(plan, 0, new Float64Array(o.size * o.size));
  const frame: BenchFrame = { meta, step: 0, counts, background: null };
  const settings = analysisSettingsSchema.parse({});
  const canvas = document.createElement('canvas');
  document.body.appendChild(canvas);
  const ctx = canvas.getContext('2d')!;
  const drawn: Drawn[] = [];
  let resolveIdle: (() => void) | null = null;
  const channel = new BenchChannel(
    new Worker('/bench.worker.js'),
    (a) => {
      canvas.width = a.output.n;
      canvas.height = a.output.n;
      paint(ctx, a.output.image, a.output.n);
      requestAnimationFrame(() => {
        drawn.push({ latencyMs: performance.now() - a.changedAt, workerMs: a.ms });
        resolveIdle?.();
      });
    },
    (m) => {
      throw new Error(m);
    },
  );
  channel.load(frame);
  const req = (k: number): BenchRequest => ({
    calibration: {
      ...plan.calibration,
      center_px: [plan.calibration.center_px[0] + 0.1 * (k % 20), plan.calibration.center_px[1]],
    },
    settings,
    factor: o.factor,
    bootstrap: false,
  });
  // warm-up (JIT, first maps)
  for (let k = 0; k < 3; k++) {
    await new Promise<void>((r) => {
      resolveIdle = r;
      channel.request(req(100 + k));
    });
  }
  drawn.length = 0;
  if (o.intervalMs <= 0) {
    // one change at a time: each waits for its frame
    for (let k = 0; k < o.changes; k++) {
      await new Promise<void>((r) => {
        resolveIdle = r;
        channel.request(req(k));
      });
    }
  } else {
    // a dragged slider: a change every intervalMs, coalesced by the channel
    resolveIdle = null;
    for (let k = 0; k < o.changes; k++) {
      channel.request(req(k));
      await new Promise((r) => setTimeout(r, o.intervalMs));
    }
    // let the last answers arrive
    await new Promise((r) => setTimeout(r, 2000));
  }
  const dropped = channel.dropped;
  channel.close();
  canvas.remove();
  return { drawn, dropped };
}

async function trial(o: { scans: number; steps: number; size: number }) {
  const settings = analysisSettingsSchema.parse({});
  const frames: BenchFrame[] = [];
  let calibration = null as null | BenchRequest['calibration'];
  for (let s = 0; s < o.scans; s++) {
    const { plan, meta } = makeFrame(o.size, o.steps, 10 + s);
    calibration = plan.calibration;
    for (let k = 0; k < o.steps; k++) {
      frames.push({
        meta,
        step: k,
        counts: renderSignal(plan, k, new Float64Array(o.size * o.size)),
        background: null,
      });
    }
  }
  const w = new Worker('/bench.worker.js');
  const t0 = performance.now();
  let id = 0;
  for (const f of frames) {
    id += 1;
    await new Promise<void>((resolve, reject) => {
      w.onmessage = (e) => (e.data.type === 'result' ? resolve() : reject(new Error(e.data.message)));
      w.postMessage({
        type: 'trial',
        id,
        frame: f,
        req: { calibration: calibration!, settings, factor: 1, bootstrap: false },
      });
    });
  }
  const ms = performance.now() - t0;
  w.terminate();
  return { ms, frames: frames.length };
}

(window as unknown as Record<string, unknown>).benchLatency = latency;
(window as unknown as Record<string, unknown>).benchTrial = trial;
