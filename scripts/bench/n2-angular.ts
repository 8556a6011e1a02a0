/**
 * N2 — angular-streaking reduction of a 1024×1024 image with 200 bootstrap resamples through createScanReducer
 * (PRODUCT.md N2, target < 2000 ms on 2 cores). Median of several runs; the frame is read once beforehand.
 */
import { existsSync } from 'node:fs';
import path from 'node:path';
import { parseSettings } from '@/reduction/formats';
import { loadH5wasmNode } from '@/reduction/hdf5/node';
import { openScanFile } from '@/reduction/hdf5/reader';
import { createScanReducer } from '@/reduction/pipeline';
import { planScan } from '@/reduction/synth/model';
import { writeSynthScan } from '@/reduction/synth/scan-file';
import { BENCH_DIR, median, row, timeRuns } from './common';

const REPS = 5;
const file = path.join(BENCH_DIR, 'n2-angular-1x1024x1024.h5');
const rt = await loadH5wasmNode();
const plan = planScan({
  kind: 'angular_streaking',
  steps: 1,
  size: 1024,
  counts: 1e6,
  distort: true,
  background: 'single',
  seed: 2,
});
if (!existsSync(file)) writeSynthScan(rt, file, plan);
const opened = openScanFile(rt, file);
if (!opened.ok) throw new Error(opened.problems.map((p) => p.message).join('\n'));
const scan = opened.scan;
const frame = scan.readFrame(0);
const bg = scan.readBackground(0);
const meta = scan.meta;
scan.close();
const settings = parseSettings({ bootstrap: { resamples: 200, seed: 12345 } });
if (!settings.ok) throw new Error(settings.problems.join('\n'));
let offset = 0;
let err = 0;
const runs = timeRuns(REPS, () => {
  const r = createScanReducer({ meta, calibration: plan.calibration, settings: settings.value });
  const s = r.addStep(0, frame, bg);
  r.finish();
  offset = s.offset_deg as number;
  err = s.offset_err_deg as number;
});
const cores = (await import('node:os')).availableParallelism();
process.stdout.write(
  `${[
    `N2 angular streaking, 1 × 1024×1024, 200 bootstrap resamples (${REPS} reps after a warm-up, medians)`,
    row(
      'createScanReducer + addStep + finish',
      median(runs),
      `(target < 2000 ms; min ${Math.min(...runs).toFixed(0)}, max ${Math.max(...runs).toFixed(0)})`,
    ),
    `  result: offset ${offset.toFixed(2)} ± ${err.toFixed(2)}° (truth ${plan.steps[0]?.offset_deg}°), ${cores} cores available`,
  ].join('\n')}\n`,
);
