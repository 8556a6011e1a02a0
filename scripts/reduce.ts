/**
 * `npm run reduce -- FILE.h5 [--calibration C.json] [--settings S.json] [--json] [--out R.h5]`
 *
 * Runs Lobeline's reduction on a local scan file (FORMATS §1) frame by frame (an event file, §1.1, chunk by chunk) and prints the result (FORMATS §4):
 * as JSON with `--json` (nothing else on stdout), else as a table. `--out` writes the result file (FORMATS §5).
 * Exit status: 0 success; 2 a file or option it refuses (every problem on stderr, one per line); 1 internal error.
 */
import { createHash } from 'node:crypto';
import { createReadStream, existsSync, readFileSync, renameSync, rmSync, statSync } from 'node:fs';
import path from 'node:path';
import { parseArgs } from 'node:util';
import { createEventReducer, virtualCalibration } from '@/reduction/events/reduce-events';
import {
  type AnalysisSettings,
  type DetectorCalibration,
  type LobelineResult,
  parseCalibration,
  parseSettings,
  SOFTWARE_VERSION,
} from '@/reduction/formats';
import { cartesianGrid } from '@/reduction/grids';
import { hasEventList, openEventFile } from '@/reduction/hdf5/event-reader';
import { loadH5wasmNode } from '@/reduction/hdf5/node';
import { ScanReadError } from '@/reduction/hdf5/problems';
import { openScanFile, type ScanFile } from '@/reduction/hdf5/reader';
import { ResultFileWriter } from '@/reduction/hdf5/result-writer';
import { createScanReducer, defaultCalibrationFor } from '@/reduction/pipeline';

// TYPES //

export interface CliIo {
  stdout(text: string): void;
  stderr(text: string): void;
}

/** A refusal: printed line by line on stderr, exit status 2. */
class Refused extends Error {
  constructor(readonly lines: string[]) {
    super(lines.join('\n'));
  }
}

const USAGE = 'usage: npm run reduce -- FILE.h5 [--calibration C.json] [--settings S.json] [--json] [--out R.h5]';

// FUNCTIONS //

/**
 * SHA-256 of a file, streamed (constant memory).
 *
 * @returns lower-case hex digest
 */
export function sha256File(file: string): Promise<string> {
  return new Promise((resolve, reject) => {
    const h = createHash('sha256');
    createReadStream(file, { highWaterMark: 4 * 1024 * 1024 })
      .on('data', (chunk) => h.update(chunk))
      .on('error', reject)
      .on('end', () => resolve(h.digest('hex')));
  });
}

function readJsonOption(flag: string, file: string): unknown {
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch {
    throw new Refused([`${flag} ${file}: cannot be read (no such file or no permission)`]);
  }
  try {
    return JSON.parse(text);
  } catch (err) {
    throw new Refused([`${flag} ${file}: not valid JSON (${(err as Error).message})`]);
  }
}

function fmt(v: number | null | undefined, digits = 3, exp = false): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '—';
  return exp ? v.toExponential(digits - 1) : v.toFixed(digits);
}

function pm(v: number | null, e: number | null, digits: number, exp = false): string {
  if (v === null) return '—';
  return e === null ? fmt(v, digits, exp) : `${fmt(v, digits, exp)} ± ${fmt(e, exp ? 2 : digits, exp)}`;
}

/**
 * Formats a result as a readable table (per step: value, counts, offset ± err, radius ± err, intensity; warnings).
 */
export function formatResultTable(r: LobelineResult, fileName: string): string {
  const i = r.input;
  const lines: string[] = [];
  const hel = i.helicity === null ? '' : `, h ${i.helicity > 0 ? '+1' : '−1'}`;
  const ell = i.ellipticity === null ? '' : `, ε ${i.ellipticity}`;
  const ratio = i.field_ratio === null ? '' : `, F(2ω)/F(ω) ${i.field_ratio}`;
  lines.push(`Lobeline ${r.software.version} — ${fileName}`);
  lines.push(
    `${i.experiment_kind}, ${i.target}, ${i.wavelength_nm} nm${ell}${hel}${ratio}; counts ${i.shape.join('×')}; sha256 ${i.sha256 ?? '—'}`,
  );
  const head = [
    'step',
    `${i.step_quantity} (${i.step_units})`,
    'counts',
    'offset (deg)',
    'radius (a.u.)',
    'I from radius (W/cm^2)',
    'lobes (deg)',
  ];
  const rows = r.steps.map((s) => [
    String(s.index),
    Math.abs(s.value) >= 1e4 ? s.value.toExponential(3) : String(Number(s.value.toPrecision(6))),
    s.total_counts.toExponential(3),
    pm(s.offset_deg, s.offset_err_deg, 2),
    pm(s.radius_au, s.radius_err_au, 4),
    pm(s.intensity_from_radius_Wcm2, s.intensity_from_radius_err_Wcm2, 4, true),
    s.lobes.map((l) => fmt(l.angle_deg, 1)).join(', ') || '—',
  ]);
  const widths = head.map((h, c) => Math.max(h.length, ...rows.map((row) => (row[c] ?? '').length)));
  const line = (cells: string[]) =>
    cells
      .map((cell, c) => cell.padEnd(widths[c] ?? 0))
      .join('  ')
      .trimEnd();
  lines.push('', line(head), line(widths.map((w) => '-'.repeat(w))), ...rows.map(line));
  if (r.phase !== null) {
    lines.push('', `phase analysis: ${r.phase.method}, ${r.phase.n_phases} phases over ${r.phase.periods} period(s)`);
    for (const g of r.phase.regions) {
      lines.push(
        `  ${g.name}: A0 ${fmt(g.a0, 1)}, A1 ${fmt(g.a1, 1)}, phase of max ${fmt(g.phase_of_max_rad, 3)} rad, contrast ${fmt(g.contrast, 3)}`,
      );
    }
  }
  lines.push('', r.warnings.length === 0 ? 'warnings: none' : 'warnings:');
  for (const w of r.warnings) lines.push(`  - ${w}`);
  return `${lines.join('\n')}\n`;
}

/**
 * Reduces an event file (FORMATS §1.1): events in chunks of `events.chunk_events`, per step histogrammed and
 * analysed as a virtual frame. Without `--calibration` the file's spectrometer values are used as they are, and the
 * result records the virtual-frame calibration of the grid.
 */
function reduceEventFile(
  rt: Awaited<ReturnType<typeof loadH5wasmNode>>,
  file: string,
  calibration: DetectorCalibration | null,
  settings: AnalysisSettings,
  sha256: string,
  out: string | undefined,
): LobelineResult {
  const opened = openEventFile(rt, file, { spectrometer: calibration?.spectrometer ?? null });
  if (!opened.ok) throw new Refused(opened.problems.map((p) => p.message));
  const scan = opened.scan;
  let writer: ResultFileWriter | null = null;
  const outPath = out === undefined ? null : path.resolve(out);
  const partial = outPath === null ? null : `${outPath}.partial-${process.pid}`;
  try {
    const reducer = createEventReducer({
      meta: scan.meta,
      spectrometer: scan.events.spectrometer,
      spectrometerSource: scan.events.spectrometerSource,
      calibration: calibration ?? virtualCalibration(cartesianGrid(settings)),
      settings,
      sha256,
      onStepArrays: (k, arrays) => writer?.writeStep(k, arrays),
    });
    if (partial !== null) {
      writer = ResultFileWriter.create(rt, partial, {
        nStep: scan.meta.shape.nStep,
        step: scan.meta.step,
        pxAu: reducer.axes.pxAu,
        pyAu: reducer.axes.pyAu,
        thetaDeg: reducer.axes.thetaDeg,
        pAu: reducer.axes.pAu,
      });
    }
    for (let k = 0; k < scan.meta.shape.nStep; k++) {
      for (const c of scan.stepChunks(k, reducer.eventSettings.chunk_events)) reducer.addChunk(k, c);
      reducer.finishStep(k);
    }
    const { result, phaseMaps } = reducer.finish();
    result.warnings.unshift(...opened.warnings);
    if (writer !== null && partial !== null && outPath !== null) {
      if (phaseMaps !== null) writer.writePhase(phaseMaps);
      writer.writeSummary(result);
      writer.close();
      writer = null;
      renameSync(partial, outPath);
    }
    return result;
  } finally {
    try {
      writer?.close();
    } catch {
      // removed below
    }
    if (partial !== null && existsSync(partial)) rmSync(partial, { force: true });
    scan.close();
  }
}

/**
 * Reduces a scan file.
 *
 * @param argv - command-line arguments after the script name
 * @param io - where output goes
 * @returns exit status (0, 1 or 2)
 */
export async function main(argv: string[], io: CliIo): Promise<number> {
  let scan: ScanFile | null = null;
  let writer: ResultFileWriter | null = null;
  let partial: string | null = null;
  try {
    let parsed: ReturnType<
      typeof parseArgs<{
        options: {
          calibration: { type: 'string' };
          settings: { type: 'string' };
          json: { type: 'boolean' };
          out: { type: 'string' };
          help: { type: 'boolean' };
        };
        allowPositionals: true;
      }>
    >;
    try {
      parsed = parseArgs({
        args: argv,
        options: {
          calibration: { type: 'string' },
          settings: { type: 'string' },
          json: { type: 'boolean' },
          out: { type: 'string' },
          help: { type: 'boolean' },
        },
        allowPositionals: true,
        strict: true,
      });
    } catch (err) {
      throw new Refused([(err as Error).message, USAGE]);
    }
    const { values, positionals } = parsed;
    if (values.help) {
      io.stdout(`${USAGE}\n`);
      return 0;
    }
    if (positionals.length !== 1)
      throw new Refused([positionals.length === 0 ? 'no scan file given' : 'give exactly one scan file', USAGE]);
    const file = path.resolve(positionals[0] as string);
    if (!existsSync(file) || !statSync(file).isFile()) throw new Refused([`${positionals[0]}: no such file`]);

    // options first: a bad calibration or settings file is refused before any work
    let calibration: DetectorCalibration | null = null;
    if (values.calibration !== undefined) {
      const c = parseCalibration(readJsonOption('--calibration', values.calibration));
      if (!c.ok) throw new Refused(c.problems.map((p) => `--calibration ${values.calibration}: ${p}`));
      calibration = c.value;
    }
    const settingsRaw = values.settings === undefined ? {} : readJsonOption('--settings', values.settings);
    const s = parseSettings(settingsRaw);
    if (!s.ok) throw new Refused(s.problems.map((p) => `--settings ${values.settings}: ${p}`));
    const settings = s.value;

    const sha256 = await sha256File(file);
    const rt = await loadH5wasmNode();
    if (hasEventList(rt, file)) {
      const result = reduceEventFile(rt, file, calibration, settings, sha256, values.out);
      if (values.json) io.stdout(`${JSON.stringify(result, null, 2)}\n`);
      else io.stdout(formatResultTable(result, path.basename(file)));
      return 0;
    }
    const opened = openScanFile(rt, file);
    if (!opened.ok) throw new Refused(opened.problems.map((p) => p.message));
    scan = opened.scan;
    const meta = scan.meta;
    if (calibration === null) {
      try {
        calibration = defaultCalibrationFor(meta);
      } catch (err) {
        throw new Refused([`${positionals[0]}: ${(err as Error).message}`]);
      }
    }

    const outPath = values.out === undefined ? null : path.resolve(values.out);
    const reducer = createScanReducer({
      meta,
      calibration,
      settings,
      sha256,
      onStepArrays: (k, arrays) => writer?.writeStep(k, arrays),
    });
    if (outPath !== null) {
      partial = `${outPath}.partial-${process.pid}`;
      writer = ResultFileWriter.create(rt, partial, {
        nStep: meta.shape.nStep,
        step: meta.step,
        pxAu: reducer.axes.pxAu,
        pyAu: reducer.axes.pyAu,
        thetaDeg: reducer.axes.thetaDeg,
        pAu: reducer.axes.pAu,
      });
    }
    const n = meta.shape.nY * meta.shape.nX;
    const frame = new Float64Array(n);
    const bg = meta.background !== null && calibration.background.subtract ? new Float64Array(n) : null;
    for (let k = 0; k < meta.shape.nStep; k++) {
      scan.readFrame(k, frame);
      const b = bg === null ? null : scan.readBackground(k, bg);
      reducer.addStep(k, frame, b);
    }
    const { result, phaseMaps } = reducer.finish();
    result.warnings.unshift(...opened.warnings);
    if (writer !== null && partial !== null && outPath !== null) {
      if (phaseMaps !== null) writer.writePhase(phaseMaps);
      writer.writeSummary(result);
      writer.close();
      writer = null;
      renameSync(partial, outPath);
      partial = null;
    }
    if (values.json) io.stdout(`${JSON.stringify(result, null, 2)}\n`);
    else io.stdout(formatResultTable(result, path.basename(file)));
    return 0;
  } catch (err) {
    if (err instanceof Refused) {
      for (const l of err.lines) io.stderr(`${l}\n`);
      return 2;
    }
    if (err instanceof ScanReadError) {
      io.stderr(`${err.problem.message}\n`);
      return 2;
    }
    if (err instanceof TypeError && /^(calibration|settings)\./.test(err.message)) {
      for (const l of err.message.split('; ')) io.stderr(`${l}\n`);
      return 2;
    }
    const e = err as Error;
    io.stderr(`internal error in lobeline ${SOFTWARE_VERSION}: ${e?.message ?? String(err)}\n`);
    if (process.env.LOBELINE_DEBUG === '1' && e?.stack) io.stderr(`${e.stack}\n`);
    return 1;
  } finally {
    try {
      writer?.close();
    } catch {
      // the partial file is removed below
    }
    if (partial !== null) rmSync(partial, { force: true });
    scan?.close();
  }
}

if (process.argv[1] && path.resolve(process.argv[1]) === path.resolve(import.meta.filename)) {
  const code = await main(process.argv.slice(2), {
    stdout: (t) => process.stdout.write(t),
    stderr: (t) => process.stderr.write(t),
  });
  process.exitCode = code;
}
