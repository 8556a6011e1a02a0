/**
 * `npx tsx scripts/event-nodes.ts FILE.h5 [--from NS] [--to NS] [--bin NS] [--t0-guess NS] [--json]`
 *
 * Calibration aid for event files (FORMATS §1.1): the magnetic field |B| and t₀ from the spacing of the cyclotron
 * nodes in the mean-R²-versus-flight-time plot (SCIENCE.md §7.7; reduction/events/node-fit.ts). The events are read
 * in chunks of 10⁶. Without --from/--to the window is the 0.5–99.5 % range of the first chunk's flight times; the
 * rough t₀ defaults to the file's (or the value 0). The values found go into a calibration version's `spectrometer`
 * (`magnetic_field`, `t0`); the sign of B is not given by the spacing.
 * Exit status: 0 a fit; 2 a refused file or no fit (the reason on stderr); 1 internal error.
 */
import path from 'node:path';
import { parseArgs } from 'node:util';
import { createNodeAccumulator, fitNodeSpacing, type NodeFit } from '@/reduction/events/node-fit';
import { openEventFile } from '@/reduction/hdf5/event-reader';
import { loadH5wasmNode } from '@/reduction/hdf5/node';

const USAGE = 'usage: npx tsx scripts/event-nodes.ts FILE.h5 [--from NS] [--to NS] [--bin NS] [--t0-guess NS] [--json]';
const CHUNK = 1_000_000;

export interface Io {
  stdout(text: string): void;
  stderr(text: string): void;
}

function num(flag: string, v: string | undefined): number | undefined {
  if (v === undefined) return undefined;
  const n = Number(v);
  if (!Number.isFinite(n)) throw new Error(`${flag} ${v}: not a number`);
  return n;
}

/** Runs the node fit on an event file; returns the exit status. */
export async function main(argv: string[], io: Io): Promise<number> {
  let args: ReturnType<
    typeof parseArgs<{ options: Record<string, { type: 'string' | 'boolean' }>; allowPositionals: true }>
  >;
  try {
    args = parseArgs({
      args: argv,
      options: {
        from: { type: 'string' },
        to: { type: 'string' },
        bin: { type: 'string' },
        't0-guess': { type: 'string' },
        json: { type: 'boolean' },
      },
      allowPositionals: true,
      strict: true,
    });
  } catch (err) {
    io.stderr(`${(err as Error).message}\n${USAGE}\n`);
    return 2;
  }
  if (args.positionals.length !== 1) {
    io.stderr(`${USAGE}\n`);
    return 2;
  }
  const v = args.values as Record<string, string | boolean | undefined>;
  let from: number | undefined;
  let to: number | undefined;
  let bin: number | undefined;
  let guess: number | undefined;
  try {
    from = num('--from', v.from as string | undefined);
    to = num('--to', v.to as string | undefined);
    bin = num('--bin', v.bin as string | undefined);
    guess = num('--t0-guess', v['t0-guess'] as string | undefined);
  } catch (err) {
    io.stderr(`${(err as Error).message}\n`);
    return 2;
  }
  const rt = await loadH5wasmNode();
  // L and E do not enter the node spacing: placeholders let a file without them (or with a wrong t₀) be fitted
  const opened = openEventFile(rt, path.resolve(args.positionals[0] as string), {
    spectrometer: { t0: guess ?? 0, acceleration_length: 1, electric_field: 1 },
  });
  if (!opened.ok) {
    for (const p of opened.problems) io.stderr(`${p.message}\n`);
    return 2;
  }
  const scan = opened.scan;
  let fit: NodeFit;
  try {
    const n = scan.events.nEvents;
    if (from === undefined || to === undefined) {
      const first = Array.from(scan.readEvents(0, Math.min(CHUNK, n)).tof).sort((a, b) => a - b);
      from ??= first[Math.floor(0.005 * (first.length - 1))] as number;
      to ??= first[Math.ceil(0.995 * (first.length - 1))] as number;
    }
    const acc = createNodeAccumulator({
      tMinNs: from,
      tMaxNs: to,
      binNs: bin ?? 0.2,
      centreMm: (scan.events.fileSpectrometer.detector_center as [number, number] | null) ?? [0, 0],
    });
    for (let a = 0; a < n; a += CHUNK) {
      const c = scan.readEvents(a, Math.min(CHUNK, n - a));
      acc.add(c.x, c.y, c.tof);
    }
    const fileT0 = scan.events.fileSpectrometer.t0;
    fit = fitNodeSpacing(acc, { t0GuessNs: guess ?? (typeof fileT0 === 'number' ? fileT0 : 0) });
  } finally {
    scan.close();
  }
  if (!fit.ok) {
    io.stderr(`no node-spacing fit: ${fit.reason}\n`);
    return 2;
  }
  if (v.json) {
    io.stdout(`${JSON.stringify(fit, null, 2)}\n`);
  } else {
    const e = (x: number | null, d: number) => (x === null ? '' : ` ± ${x.toFixed(d)}`);
    io.stdout(
      [
        `nodes (ns): ${fit.nodesNs.map((t, i) => `n=${fit.nodeNumbers[i]} ${t.toFixed(3)}`).join(', ')}`,
        `cyclotron period: ${fit.periodNs.toFixed(4)}${e(fit.periodErrNs, 4)} ns`,
        `|B|: ${(fit.magneticFieldT * 1e4).toFixed(4)}${e(fit.magneticFieldErrT === null ? null : fit.magneticFieldErrT * 1e4, 4)} G`,
        `t0: ${fit.t0Ns.toFixed(3)}${e(fit.t0ErrNs, 3)} ns`,
        `rms residual of the node times: ${fit.residualRmsNs.toFixed(4)} ns`,
        '',
      ].join('\n'),
    );
  }
  return 0;
}

if (process.argv[1] && path.resolve(process.argv[1]) === path.resolve(import.meta.filename)) {
  process.exitCode = await main(process.argv.slice(2), {
    stdout: (t) => process.stdout.write(t),
    stderr: (t) => process.stderr.write(t),
  });
}
