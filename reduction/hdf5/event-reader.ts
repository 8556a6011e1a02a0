/**
 * Event-list reader (FORMATS §1.1) on h5wasm: delay-line and reaction-microscope files that hold events
 * (x, y, time of flight) in `/entry/events` instead of images.
 *
 * Order of work, as for image files (reader.ts): the HDF5 signature is checked on raw bytes; then every metadata rule
 * of the entry (identification, sample, source: the image reader's own checks) and of `events/` and
 * `instrument/spectrometer/` is checked on metadata only, and every problem is returned at once with its path and
 * rule. Nothing proportional to the number of events is allocated before the events are read, and they are read in
 * chunks (hyperslabs of `count` events), never all at once. An absurd size (n_events > 2³⁴) is refused from the
 * dataspace alone.
 *
 * Spectrometer values: the file's, each one overridden by the calibration's `spectrometer` when that gives it; a
 * value the file lacks is then not a problem. The module imports no Node-only code.
 */
import type { Dataset, Metadata } from 'h5wasm';
import type { SpectrometerSi } from '../events/kinematics';
import {
  type DetectorCalibration,
  type ScanMetadata,
  STEP_QUANTITIES,
  STEP_UNITS,
  type StepQuantity,
} from '../formats';
import { problem, ScanFileRefusedError, type ScanProblem, ScanReadError } from './problems';
import {
  type Checker,
  dtypeName,
  type OpenScanOptions,
  openFromScratch,
  openScanBytes,
  openScanFile,
  readBytes,
  type ScanFile,
  safeClose,
  validateEventEntry,
} from './reader';
import type { H5Runtime } from './runtime';
import { summarizeHdf5Error } from './runtime';
import { checkHdf5Signature } from './signature';

// VARIABLES //

/** Limits of FORMATS §1.1 (steps as for image files, §1). */
export const EVENT_LIMITS = { maxEvents: 2 ** 34, maxSteps: 4096 } as const;

const EVENTS = '/entry/events';
const SPEC = '/entry/instrument/spectrometer';
const EVENT_DTYPES = ['float32', 'float64'];

// TYPES //

/** Spectrometer override of a calibration (FORMATS §2 extension, names and units of §1.1). */
export type SpectrometerOverride = NonNullable<DetectorCalibration['spectrometer']>;

export type SpectrometerKey = keyof SpectrometerOverride;

export interface OpenEventOptions {
  /** Extra HDF5 filter ids to accept (default: the plugins found by the runtime). */
  acceptedPluginFilters?: number[];
  /** The calibration's spectrometer values: each one given overrides the file's. */
  spectrometer?: SpectrometerOverride | null;
}

/** What the event reader found, beside the usual scan metadata. */
export interface EventListMeta {
  nEvents: number;
  /** Stored dtypes of x, y, tof. */
  dtypes: { x: string; y: string; tof: string };
  /** Index of the first event of each step (length n_step); step k holds [start_k, start_{k+1}). */
  stepStart: number[];
  /** Events of each step. */
  stepEvents: number[];
  /** The spectrometer values used (file, then calibration over it, then the defaults of §1.1). */
  spectrometer: SpectrometerSi;
  /** The values as stored in the file (null where absent or unusable). */
  fileSpectrometer: Record<SpectrometerKey, number | [number, number] | null>;
  /** Where each value used came from. */
  spectrometerSource: Record<SpectrometerKey, 'file' | 'calibration' | 'default'>;
  /** HDF5 chunk length of x (null when contiguous). */
  storageChunk: number | null;
}

export type OpenEventResult =
  | { ok: true; scan: EventScanFile; warnings: string[] }
  | { ok: false; problems: ScanProblem[]; warnings: string[] };

/** One chunk of events as stored (float32 or float64). */
export interface EventChunk {
  start: number;
  x: ArrayLike<number>;
  y: ArrayLike<number>;
  tof: ArrayLike<number>;
}

// EVENT SCAN FILE //

/** An opened, validated event file. Events are read in chunks. */
export class EventScanFile {
  /** Scan metadata: shape n_step × 1 × 1 (the reduction gives the frames their grid), steps, shots, events. */
  readonly meta: ScanMetadata;
  readonly events: EventListMeta;
  private readonly file: InstanceType<H5Runtime['File']>;
  private readonly ds: { x: Dataset; y: Dataset; tof: Dataset };
  private readonly onClose: (() => void) | null;
  private closed = false;

  /** @internal — use `openEventFile`. */
  constructor(args: {
    meta: ScanMetadata;
    events: EventListMeta;
    file: InstanceType<H5Runtime['File']>;
    ds: { x: Dataset; y: Dataset; tof: Dataset };
    onClose: (() => void) | null;
  }) {
    this.meta = args.meta;
    this.events = args.events;
    this.file = args.file;
    this.ds = args.ds;
    this.onClose = args.onClose;
  }

  /**
   * Reads events [start, start + count) of the whole list.
   *
   * @throws ScanReadError naming the dataset when the range is wrong or the read fails
   */
  readEvents(start: number, count: number): EventChunk {
    const n = this.events.nEvents;
    if (this.closed) throw new ScanReadError(problem(EVENTS, 'the file was already closed'));
    if (!Number.isInteger(start) || !Number.isInteger(count) || start < 0 || count < 0 || start + count > n) {
      throw new ScanReadError(problem(EVENTS, `events ${start}…${start + count} do not exist (the list has ${n})`));
    }
    const read = (name: 'x' | 'y' | 'tof'): ArrayLike<number> => {
      const path = `${EVENTS}/${name}`;
      let raw: unknown;
      try {
        raw = this.ds[name].slice([[start, start + count]]);
      } catch (err) {
        throw new ScanReadError(
          problem(
            path,
            `events ${start}…${start + count}: the stored data could not be read or decoded (${summarizeHdf5Error(err)}); the file is probably corrupt`,
          ),
        );
      }
      if (!(raw instanceof Float64Array || raw instanceof Float32Array) || raw.length !== count) {
        const got = ArrayBuffer.isView(raw) ? `${(raw as unknown as ArrayLike<number>).length} values` : typeof raw;
        throw new ScanReadError(problem(path, `events ${start}…${start + count}: read returned ${got}`));
      }
      return raw;
    };
    return { start, x: read('x'), y: read('y'), tof: read('tof') };
  }

  /**
   * The events of step k, chunk by chunk (at most `chunkEvents` per chunk).
   *
   * @param k - step index
   * @param chunkEvents - events per chunk (the setting `events.chunk_events`)
   */
  *stepChunks(k: number, chunkEvents: number): Generator<EventChunk> {
    const { stepStart, stepEvents } = this.events;
    if (!Number.isInteger(k) || k < 0 || k >= stepStart.length) {
      throw new ScanReadError(problem(EVENTS, `step ${k} does not exist (the scan has ${stepStart.length} steps)`, k));
    }
    if (!(Number.isInteger(chunkEvents) && chunkEvents >= 1)) throw new RangeError('chunkEvents must be ≥ 1');
    const begin = stepStart[k] as number;
    const end = begin + (stepEvents[k] as number);
    for (let a = begin; a < end; a += chunkEvents) yield this.readEvents(a, Math.min(chunkEvents, end - a));
  }

  close(): void {
    if (this.closed) return;
    this.closed = true;
    try {
      this.file.close();
    } finally {
      this.onClose?.();
    }
  }
}

// OPEN //

/** Whether an HDF5 file holds `/entry/events` (an event file); false when it cannot be opened at all. */
export function hasEventList(rt: H5Runtime, path: string): boolean {
  let file: InstanceType<H5Runtime['File']> | null = null;
  try {
    const probe = readBytes(rt, path);
    if (!checkHdf5Signature(probe.read, probe.size).ok) return false;
    file = new rt.File(path, 'r');
    return file.get('/entry/events') !== null && file.get('/entry/events') !== undefined;
  } catch {
    return false;
  } finally {
    if (file !== null) safeClose(file);
  }
}

/**
 * Opens an event file in the module's file system and checks every rule of FORMATS §1 (entry) and §1.1 (events,
 * spectrometer) before any event is read.
 *
 * @returns the opened file, or every problem found
 */
export function openEventFile(
  rt: H5Runtime,
  path: string,
  options: OpenEventOptions = {},
  onClose: (() => void) | null = null,
): OpenEventResult {
  const fileProblem = (rule: string): OpenEventResult => ({
    ok: false,
    problems: [problem('(file)', rule)],
    warnings: [],
  });
  let probe: ReturnType<typeof readBytes>;
  try {
    probe = readBytes(rt, path);
  } catch {
    return fileProblem(`cannot be read: no such file "${path}"`);
  }
  const sig = checkHdf5Signature(probe.read, probe.size);
  if (!sig.ok) return fileProblem(sig.problem ?? 'not a readable HDF5 file');
  let file: InstanceType<H5Runtime['File']>;
  try {
    file = new rt.File(path, 'r');
  } catch (err) {
    return fileProblem(`the HDF5 library could not open the file: ${summarizeHdf5Error(err)}`);
  }
  const accepted = new Set<number>([1, 2, 3, ...(options.acceptedPluginFilters ?? rt.pluginFilterIds)]);
  let found: EventPart | null = null;
  let result: ReturnType<typeof validateEventEntry>;
  try {
    result = validateEventEntry(rt, file, accepted, (c) => {
      found = checkEventGroups(c, accepted, options.spectrometer ?? null);
    });
  } catch (err) {
    safeClose(file);
    return fileProblem(`the file's structure could not be read: ${summarizeHdf5Error(err)}`);
  }
  const { checker, meta } = result;
  const part = found as EventPart | null;
  if (checker.problems.length > 0 || meta === null || part === null) {
    safeClose(file);
    const problems =
      checker.problems.length > 0 ? checker.problems : [problem('(file)', 'the event list is incomplete')];
    return { ok: false, problems, warnings: checker.warnings };
  }
  if (meta.experimentKind === 'two_color_phase' && !['relative_phase', 'delay'].includes(part.step.quantity)) {
    safeClose(file);
    return {
      ok: false,
      problems: [problem(`${EVENTS}/step@quantity`, `two_color_phase scans step relative_phase or delay`)],
      warnings: checker.warnings,
    };
  }
  const nStep = part.events.stepStart.length;
  const fullMeta: ScanMetadata = {
    ...meta,
    shape: { nStep, nY: 1, nX: 1 },
    countsIs3d: nStep > 1,
    countsDtype: 'float64',
    countsFilters: part.filters,
    countsChunks: part.events.storageChunk === null ? null : [part.events.storageChunk],
    step: part.step,
    shots: part.shots,
    xAxis: null,
    yAxis: null,
    background: null,
    events: {
      count: part.events.nEvents,
      paths: [`${EVENTS}/x`, `${EVENTS}/y`, `${EVENTS}/tof`],
      stepEvents: part.events.stepEvents,
      spectrometer: part.events.spectrometer,
      spectrometerSource: part.events.spectrometerSource,
    },
  };
  return {
    ok: true,
    scan: new EventScanFile({ meta: fullMeta, events: part.events, file, ds: part.ds, onClose }),
    warnings: checker.warnings,
  };
}

/** Opens an event file from bytes (written to `scratchPath`, removed on close or at once when refused). */
export function openEventBytes(
  rt: H5Runtime,
  bytes: Uint8Array,
  scratchPath: string,
  options: OpenEventOptions = {},
): OpenEventResult {
  return openFromScratch(rt, bytes, scratchPath, (remove) => openEventFile(rt, scratchPath, options, remove));
}

/** Like `openEventFile` but throws `ScanFileRefusedError` with every problem. */
export function openEventFileOrThrow(rt: H5Runtime, path: string, options: OpenEventOptions = {}): EventScanFile {
  const r = openEventFile(rt, path, options);
  if (!r.ok) throw new ScanFileRefusedError(r.problems);
  return r.scan;
}

// CHECKS //

interface EventPart {
  events: EventListMeta;
  ds: { x: Dataset; y: Dataset; tof: Dataset };
  step: ScanMetadata['step'];
  shots: number[];
  filters: string[];
}

function shapeText(shape: number[] | null): string {
  return shape === null ? 'null (empty dataspace)' : `[${shape.join(', ')}]`;
}

/** Reads a 1-D dataset's values (small: steps, indices, shots) after its shape was checked. */
function smallValues(c: Checker, d: Dataset, path: string): number[] | null {
  let v: unknown;
  try {
    v = d.value;
  } catch (err) {
    c.fail(path, `cannot be read (${summarizeHdf5Error(err)})`);
    return null;
  }
  if (typeof v === 'number' || typeof v === 'bigint') return [Number(v)];
  if (ArrayBuffer.isView(v)) return Array.from(v as unknown as ArrayLike<number | bigint>, (x) => Number(x));
  c.fail(path, 'cannot be read as numbers');
  return null;
}

function checkEventGroups(
  c: Checker,
  accepted: ReadonlySet<number>,
  override: SpectrometerOverride | null,
): EventPart | null {
  const filters: string[] = [];
  // events/
  const g = c.group(EVENTS, 'NXevent_data', 'required for event files');
  const ds: Partial<Record<'x' | 'y' | 'tof', Dataset>> = {};
  const lengths: Partial<Record<'x' | 'y' | 'tof', number>> = {};
  const dtypes: Record<'x' | 'y' | 'tof', string> = { x: '', y: '', tof: '' };
  let storageChunk: number | null = null;
  if (g !== null) {
    for (const [name, units, what] of [
      ['x', 'mm', 'impact position x on the detector, mm, one value per event'],
      ['y', 'mm', 'impact position y on the detector, mm, one value per event'],
      ['tof', 'ns', 'measured flight time, ns (t₀ not yet subtracted), one value per event'],
    ] as const) {
      const path = `${EVENTS}/${name}`;
      const d = c.dataset(path, 'required for event files', what);
      const m: Metadata | null = d ? c.metadata(d, path) : null;
      if (d === null || m === null) continue;
      const dt = dtypeName(m);
      dtypes[name] = dt;
      let ok = true;
      if (!EVENT_DTYPES.includes(dt)) {
        c.fail(path, `must be float32 or float64 (${what}), found ${dt}`);
        ok = false;
      }
      if (m.shape === null || m.shape.length !== 1) {
        c.fail(path, `must be 1-D [n_events], found shape ${shapeText(m.shape)}`);
        continue;
      }
      const n = m.shape[0] as number;
      if (n > EVENT_LIMITS.maxEvents) {
        c.fail(path, `${n} events exceed the limit of 2^34 = ${EVENT_LIMITS.maxEvents} (refused before reading)`);
        ok = false;
      } else if (n < 1) {
        c.fail(path, 'holds no events');
        ok = false;
      }
      c.checkUnits(d, path, units, true);
      filters.push(...c.filters(d, path, accepted).filter((f) => !filters.includes(f)));
      if (name === 'x') storageChunk = m.chunks?.[0] ?? null;
      if (ok) {
        ds[name] = d;
        lengths[name] = n;
      }
    }
  }
  let nEvents: number | null = null;
  if (lengths.x !== undefined && lengths.y !== undefined && lengths.tof !== undefined) {
    nEvents = lengths.x;
    for (const name of ['y', 'tof'] as const) {
      if (lengths[name] !== lengths.x) {
        c.fail(
          `${EVENTS}/${name}`,
          `has ${lengths[name]} events but ${EVENTS}/x has ${lengths.x}; x, y and tof must hold one value per event`,
        );
        nEvents = null;
      }
    }
  }

  // steps and their first events
  let step: ScanMetadata['step'] | null = null;
  let stepStart: number[] | null = null;
  let shots: number[] | null = null;
  if (g !== null) {
    const stepPath = `${EVENTS}/step`;
    const stepD =
      c.get(stepPath) === null ? null : c.dataset(stepPath, null, 'the scanned quantity, one value per step');
    if (stepD === null) {
      step = { quantity: 'index', units: '1', values: [0] };
      stepStart = [0];
      if (c.get(`${EVENTS}/event_index`) !== null) {
        c.warnings.push(`${EVENTS}/event_index: ignored because ${stepPath} is absent (the file is one step)`);
      }
    } else {
      const m = c.metadata(stepD, stepPath);
      const shape = m?.shape ?? null;
      const nStep = shape !== null && shape.length === 1 ? (shape[0] as number) : null;
      if (m !== null && (nStep === null || !(m.type === 0 || m.type === 1))) {
        c.fail(stepPath, `must be 1-D numbers [n_step], found ${dtypeName(m)} of shape ${shapeText(shape)}`);
      } else if (nStep !== null && (nStep < 1 || nStep > EVENT_LIMITS.maxSteps)) {
        c.fail(stepPath, `${nStep} steps: must be 1…${EVENT_LIMITS.maxSteps} (refused before reading)`);
      } else if (nStep !== null) {
        const q = c.attrString(stepD, stepPath, 'quantity');
        const u = c.attrString(stepD, stepPath, 'units');
        let quantity: StepQuantity | null = null;
        if (q === undefined)
          c.fail(`${stepPath}@quantity`, `required: one of ${STEP_QUANTITIES.join(', ')} but missing`);
        else if (q !== null && (STEP_QUANTITIES as string[]).includes(q)) quantity = q as StepQuantity;
        else if (q !== null)
          c.fail(`${stepPath}@quantity`, `must be one of ${STEP_QUANTITIES.join(', ')}, found "${q}"`);
        if (quantity !== null) {
          const want = STEP_UNITS[quantity];
          const okUnit = (x: string) =>
            x.trim() === want || (want === 'W/cm^2' && ['W/cm2', 'W cm-2'].includes(x.trim()));
          if (u === undefined) c.fail(`${stepPath}@units`, `required: must be "${want}" for ${quantity} but missing`);
          else if (u !== null && !okUnit(u)) {
            c.fail(`${stepPath}@units`, `must be "${want}" for step quantity ${quantity}, found "${u}"`);
          }
        }
        const values = smallValues(c, stepD, stepPath);
        const bad = values?.findIndex((v) => !Number.isFinite(v)) ?? -1;
        if (values !== null && bad >= 0)
          c.fail(stepPath, `element ${bad} is ${values[bad]}; every value must be finite`);
        else if (values !== null && quantity === 'intensity' && values.some((v) => !(v > 0))) {
          c.fail(stepPath, 'intensities must be > 0 W/cm^2');
        } else if (values !== null && quantity !== null) step = { quantity, units: STEP_UNITS[quantity], values };

        // event_index: required with a step axis
        const idxPath = `${EVENTS}/event_index`;
        const idxD = c.dataset(idxPath, `required with ${stepPath}`, 'index of the first event of each step, int64');
        const im = idxD ? c.metadata(idxD, idxPath) : null;
        if (idxD !== null && im !== null) {
          if (im.type !== 0) c.fail(idxPath, `must be integers (int64), found ${dtypeName(im)}`);
          else if (im.shape === null || im.shape.length !== 1 || im.shape[0] !== nStep) {
            c.fail(
              idxPath,
              `must have shape [${nStep}] (one index per step of ${stepPath}), found ${shapeText(im.shape)}`,
            );
          } else {
            const idx = smallValues(c, idxD, idxPath);
            if (idx !== null) stepStart = checkEventIndex(c, idxPath, idx, nEvents);
          }
        }
      }
    }
    // shots (optional)
    const nStep = stepStart?.length ?? null;
    if (nStep !== null) {
      const shotsPath = `${EVENTS}/shots`;
      shots = c.optional('every step counts as 1 shot', () => {
        const d = c.get(shotsPath) === null ? null : c.dataset(shotsPath, null, 'laser shots per step');
        if (d === null) return null;
        const m = c.metadata(d, shotsPath);
        if (m === null) return null;
        if (!(m.type === 0 || m.type === 1) || m.shape === null || m.shape.length > 1 || (m.shape[0] ?? 1) !== nStep) {
          c.fail(shotsPath, `must be numbers of shape [${nStep}], found ${dtypeName(m)} ${shapeText(m.shape)}`);
          return null;
        }
        const v = smallValues(c, d, shotsPath);
        if (v?.some((s) => !(s > 0 && Number.isFinite(s)))) {
          c.fail(shotsPath, 'shots must be finite and > 0');
          return null;
        }
        return v;
      });
      shots ??= new Array<number>(nStep).fill(1);
    }
  }

  // spectrometer
  const spec = readSpectrometer(c, override);
  if (
    nEvents === null ||
    step === null ||
    stepStart === null ||
    shots === null ||
    spec === null ||
    ds.x === undefined ||
    ds.y === undefined ||
    ds.tof === undefined
  ) {
    return null;
  }
  if (step.values.length !== stepStart.length) return null;
  const total = nEvents;
  const stepEvents = stepStart.map((s, k) => (stepStart[k + 1] ?? total) - s);
  return {
    events: {
      nEvents,
      dtypes,
      stepStart,
      stepEvents,
      spectrometer: spec.used,
      fileSpectrometer: spec.file,
      spectrometerSource: spec.source,
      storageChunk,
    },
    ds: { x: ds.x, y: ds.y, tof: ds.tof },
    step,
    shots,
    filters,
  };
}

/** event_index rules: starts at 0, never decreases, never beyond n_events. */
function checkEventIndex(c: Checker, path: string, idx: number[], nEvents: number | null): number[] | null {
  if (idx[0] !== 0) {
    c.fail(path, `must start at 0 (the first event of the first step), found ${idx[0]}`);
    return null;
  }
  for (let k = 1; k < idx.length; k++) {
    if ((idx[k] as number) < (idx[k - 1] as number)) {
      c.fail(path, `must never decrease (NeXus NXevent_data), but element ${k} is ${idx[k]} after ${idx[k - 1]}`);
      return null;
    }
  }
  const last = idx[idx.length - 1] as number;
  if (nEvents !== null && last > nEvents) {
    c.fail(path, `element ${idx.length - 1} is ${last}, beyond the ${nEvents} events of the list`);
    return null;
  }
  return idx;
}

const SPEC_FIELDS: readonly {
  key: SpectrometerKey;
  units: string;
  what: string;
  required: boolean;
  check: (v: number) => string | null;
}[] = [
  {
    key: 'acceleration_length',
    units: 'm',
    what: 'length L of the acceleration region, m',
    required: true,
    check: (v) => (v > 0 ? null : `must be > 0 m, found ${v}`),
  },
  {
    key: 'drift_length',
    units: 'm',
    what: 'field-free drift length D, m',
    required: false,
    check: (v) => (v >= 0 ? null : `must be ≥ 0 m, found ${v}`),
  },
  {
    key: 'electric_field',
    units: 'V/m',
    what: 'spectrometer field accelerating electrons toward the detector, V/m',
    required: true,
    check: (v) => (v > 0 ? null : `must be > 0 V/m (accelerating electrons toward the detector), found ${v}`),
  },
  {
    key: 'magnetic_field',
    units: 'T',
    what: 'magnetic field along the spectrometer axis, T',
    required: false,
    check: (v) => (Math.abs(v) < 1 ? null : `must be below 1 T in magnitude, found ${v}; check the units`),
  },
  { key: 't0', units: 'ns', what: 'time offset t₀, ns', required: true, check: () => null },
];

function readSpectrometer(
  c: Checker,
  override: SpectrometerOverride | null,
): {
  used: SpectrometerSi;
  file: EventListMeta['fileSpectrometer'];
  source: EventListMeta['spectrometerSource'];
} | null {
  const anyRequiredMissing = SPEC_FIELDS.some((f) => f.required && override?.[f.key] === undefined);
  const g = c.group(
    SPEC,
    'NXcollection',
    anyRequiredMissing ? 'required for event files (acceleration_length, electric_field, t0)' : null,
  );
  const file: EventListMeta['fileSpectrometer'] = {
    acceleration_length: null,
    drift_length: null,
    electric_field: null,
    magnetic_field: null,
    t0: null,
    detector_center: null,
  };
  const source: EventListMeta['spectrometerSource'] = {
    acceleration_length: 'default',
    drift_length: 'default',
    electric_field: 'default',
    magnetic_field: 'default',
    t0: 'default',
    detector_center: 'default',
  };
  let ok = g !== null || !anyRequiredMissing;
  for (const f of SPEC_FIELDS) {
    const path = `${SPEC}/${f.key}`;
    const given = override?.[f.key] as number | undefined;
    const required = f.required && given === undefined && g !== null ? 'required for event files' : null;
    const read = () => {
      const v = c.number(path, required, f.what, f.units);
      if (v === null) return null;
      const bad = f.check(v);
      if (bad !== null) {
        c.fail(path, bad);
        return null;
      }
      return v;
    };
    let v: number | null = null;
    if (g !== null) {
      const before = c.problems.length;
      v =
        required !== null
          ? read()
          : c.optional(given !== undefined ? 'the calibration’s value is used' : 'the default is used', read);
      if (c.problems.length > before) ok = false;
    }
    file[f.key] = v;
    if (given !== undefined) source[f.key] = 'calibration';
    else if (v !== null) source[f.key] = 'file';
  }
  if (g !== null) {
    const path = `${SPEC}/detector_center`;
    file.detector_center = c.optional(
      override?.detector_center ? 'the calibration’s value is used' : 'the default (0, 0) mm is used',
      () => {
        const d = c.get(path) === null ? null : c.dataset(path, null, 'impact point of p⊥ = 0, mm');
        if (d === null) return null;
        c.checkUnits(d, path, 'mm', false);
        const v = c.vector(path, d, 2, 'impact point (x, y) of p⊥ = 0, mm', false);
        return v === null ? null : ([v[0] as number, v[1] as number] as [number, number]);
      },
    );
  }
  if (override?.detector_center) source.detector_center = 'calibration';
  else if (file.detector_center !== null) source.detector_center = 'file';
  if (!ok) return null;
  const pick = (k: Exclude<SpectrometerKey, 'detector_center'>, dflt: number) =>
    (override?.[k] as number | undefined) ?? (file[k] as number | null) ?? dflt;
  const L = pick('acceleration_length', Number.NaN);
  const E = pick('electric_field', Number.NaN);
  const t0 = pick('t0', Number.NaN);
  if (!Number.isFinite(L) || !Number.isFinite(E) || !Number.isFinite(t0)) return null;
  return {
    used: {
      acceleration_length_m: L,
      drift_length_m: pick('drift_length', 0),
      electric_field_v_per_m: E,
      magnetic_field_t: pick('magnetic_field', 0),
      t0_ns: t0,
      detector_center_mm: override?.detector_center ?? (file.detector_center as [number, number] | null) ?? [0, 0],
    },
    file,
    source,
  };
}

// EITHER KIND //

export type OpenAnyResult =
  | { ok: true; kind: 'image'; scan: ScanFile; warnings: string[] }
  | { ok: true; kind: 'events'; scan: EventScanFile; warnings: string[] }
  | { ok: false; kind: 'image' | 'events'; problems: ScanProblem[]; warnings: string[] };

/**
 * Opens an image scan or an event file: a file with `/entry/events` is an event file (FORMATS §1.1; its `data/`, if
 * any, is not reduced), every other file an image scan (§1).
 */
export function openScanOrEvents(
  rt: H5Runtime,
  path: string,
  options: OpenEventOptions & OpenScanOptions = {},
): OpenAnyResult {
  if (hasEventList(rt, path)) {
    const r = openEventFile(rt, path, options);
    return r.ok ? { ...r, kind: 'events' } : { ...r, kind: 'events' };
  }
  const r = openScanFile(rt, path, options);
  return r.ok
    ? { ok: true, kind: 'image', scan: r.scan, warnings: r.warnings }
    : { ok: false, kind: 'image', problems: r.problems, warnings: r.warnings };
}

/** Like `openScanOrEvents` from bytes (scratch file removed on close, or at once when refused). */
export function openScanOrEventsBytes(
  rt: H5Runtime,
  bytes: Uint8Array,
  scratchPath: string,
  options: OpenEventOptions & OpenScanOptions = {},
): OpenAnyResult {
  const FS = rt.Module.FS;
  FS.writeFile(scratchPath, bytes);
  const remove = () => {
    try {
      FS.unlink(scratchPath);
    } catch {
      // already gone
    }
  };
  if (hasEventList(rt, scratchPath)) {
    const r = openEventFile(rt, scratchPath, options, remove);
    if (!r.ok) remove();
    return r.ok ? { ...r, kind: 'events' } : { ...r, kind: 'events' };
  }
  remove();
  const r = openScanBytes(rt, bytes, scratchPath, options);
  return r.ok
    ? { ok: true, kind: 'image', scan: r.scan, warnings: r.warnings }
    : { ok: false, kind: 'image', problems: r.problems, warnings: r.warnings };
}
