/**
 * Scan-file reader (FORMATS §1) on h5wasm.
 *
 * Order of work: (1) the HDF5 signature and superblock are checked on raw bytes; (2) the file is opened and every
 * metadata rule is checked (paths, attributes, NX_class, string kinds, dtypes, shapes, limits, step quantity and
 * units, filters) *before* any frame is allocated; all problems are returned at once; (3) frames are read one step
 * at a time through a hyperslab into a Float64Array, and each read is checked (HDF5 status, byte length, NaN,
 * infinities, negative counts).
 *
 * The module imports no Node-only code: the h5wasm runtime is passed in (see runtime.ts, node.ts).
 */
import type { Dataset, Entity, Group, Metadata } from 'h5wasm';
import { ionizationEnergyEv } from '../constants';
import {
  EXPERIMENT_KINDS,
  type ExperimentKind,
  INTENSITY_CONVENTIONS,
  SCAN_LIMITS,
  type ScanMetadata,
  STEP_QUANTITIES,
  STEP_UNITS,
  type StepQuantity,
} from '../formats';
import { problem, ScanFileRefusedError, type ScanProblem, ScanReadError } from './problems';
import type { H5Runtime } from './runtime';
import { summarizeHdf5Error } from './runtime';
import { checkHdf5Signature } from './signature';

// VARIABLES //

/** Counts dtypes FORMATS §1 allows. */
export const COUNTS_DTYPES = ['uint8', 'uint16', 'uint32', 'int16', 'int32', 'float32', 'float64'] as const;

/** Built-in filters always accepted: deflate (gzip), shuffle, fletcher32. */
const BUILTIN_FILTERS: Readonly<Record<number, string>> = { 1: 'gzip/deflate', 2: 'shuffle', 3: 'fletcher32' };

/** Names of filters we may meet, for the "unsupported compression" sentence. */
const KNOWN_FILTER_NAMES: Readonly<Record<number, string>> = {
  4: 'szip',
  5: 'n-bit',
  6: 'scale-offset',
  307: 'bzip2',
  32000: 'LZF',
  32001: 'Blosc',
  32004: 'LZ4',
  32008: 'bitshuffle',
  32013: 'ZFP',
  32015: 'Zstandard',
  32017: 'SZ',
  32019: 'JPEG',
  32026: 'Blosc2',
};

/**
 * Units are compared as FORMATS §1 writes them; the only other spellings accepted are the two §1 lists for W/cm^2.
 */
const UNIT_ALIASES: Readonly<Record<string, readonly string[]>> = {
  'W/cm^2': ['W/cm^2', 'W/cm2', 'W cm-2'],
};

const ISO_8601_WITH_OFFSET = /^\d{4}-\d{2}-\d{2}[T ]\d{2}:\d{2}(:\d{2}(\.\d+)?)?(Z|[+-]\d{2}(:?\d{2})?)$/;

const ENTRY = '/entry';
const DATA = '/entry/data';
const COUNTS = '/entry/data/counts';
const SOURCE = '/entry/instrument/source';
const BACKGROUND = '/entry/background';

// TYPES //

export interface OpenScanOptions {
  /** Extra HDF5 filter ids to accept (default: the plugins found by the runtime). */
  acceptedPluginFilters?: number[];
  /** Bytes the counts of one frame may take at most (default 512 MiB; WASM memory is capped at 2 GiB). */
  maxFrameBytes?: number;
}

export type OpenScanResult =
  | { ok: true; scan: ScanFile; warnings: string[] }
  | { ok: false; problems: ScanProblem[]; warnings: string[]; extraPaths: string[] };

// HELPERS //

/** dtype name of numeric metadata, e.g. `uint16`, `float32`; `string`; or the HDF5 class name. */
export function dtypeName(m: Metadata): string {
  if (m.type === 0) return `${m.signed ? 'int' : 'uint'}${m.size * 8}`;
  if (m.type === 1) return `float${m.size * 8}`;
  if (m.type === 3) return m.vlen ? 'string (variable length)' : `string (fixed length ${m.size})`;
  const classes = ['integer', 'float', 'time', 'string', 'bitfield', 'opaque', 'compound', 'reference', 'enum'];
  return classes[m.type] ?? (m.type === 9 ? 'variable-length sequence' : m.type === 10 ? 'array' : 'unknown type');
}

function isNumeric(m: Metadata): boolean {
  return m.type === 0 || m.type === 1;
}

function unitMatches(found: string, canonical: string): boolean {
  const aliases = UNIT_ALIASES[canonical] ?? [canonical];
  return aliases.includes(found.trim());
}

function fmtShape(shape: number[] | null): string {
  return shape === null ? 'null (empty dataspace)' : `[${shape.join(', ')}]`;
}

/** Number of elements of a shape ([] = scalar = 1). */
function elements(shape: number[]): number {
  return shape.reduce((a, b) => a * b, 1);
}

// VALIDATION CONTEXT //

/** Collects the problems and warnings of one file's validation (also used by the event-list reader). */
export class Checker {
  readonly problems: ScanProblem[] = [];
  readonly warnings: string[] = [];
  /** Paths the reader uses; everything else is listed as extra. */
  readonly used = new Set<string>(['/']);

  constructor(
    readonly rt: H5Runtime,
    readonly root: Group,
  ) {}

  fail(path: string, rule: string): void {
    this.problems.push(problem(path, rule));
  }

  /** The object at `path`, or null; never throws. Marks parent groups as used. */
  get(path: string): Entity | null {
    try {
      const e = this.root.get(path);
      return e ?? null;
    } catch {
      return null;
    }
  }

  use(path: string): void {
    this.used.add(path);
  }

  /**
   * Reads optional content (FORMATS §1): every problem `read` records is turned into a warning that names the path
   * and the rule and says what Lobeline does instead, and the result is then null, so the caller uses its default.
   *
   * @param instead - what happens without the content, e.g. "the default 0° is used"
   * @param read - the reading and checking code; it records problems with `fail`
   * @returns the value `read` returned, or null when it recorded a problem
   */
  optional<T>(instead: string, read: () => T | null): T | null {
    const before = this.problems.length;
    const v = read();
    if (this.problems.length === before) return v;
    for (const p of this.problems.splice(before)) {
      this.warnings.push(`${p.message}. This content is optional, so it was ignored and ${instead}.`);
    }
    return null;
  }

  group(path: string, nxClass: string | null, required: string | null): Group | null {
    const e = this.get(path);
    if (e === null) {
      if (required !== null) this.fail(path, `${required} but missing`);
      return null;
    }
    if (!(e instanceof this.rt.Group)) {
      this.fail(path, `must be a group${nxClass ? ` (${nxClass})` : ''}, found ${entityKind(e)}`);
      return null;
    }
    this.use(path);
    if (nxClass !== null) {
      const cls = this.attrString(e, path, 'NX_class');
      if (cls === undefined) this.fail(`${path}@NX_class`, `required: must be "${nxClass}" but missing`);
      else if (cls !== null && cls !== nxClass) this.fail(`${path}@NX_class`, `must be "${nxClass}", found "${cls}"`);
    }
    return e;
  }

  dataset(path: string, required: string | null, what: string): Dataset | null {
    const e = this.get(path);
    if (e === null) {
      if (required !== null) this.fail(path, `${required} (${what}) but missing`);
      return null;
    }
    if (!(e instanceof this.rt.Dataset)) {
      this.fail(path, `must be a dataset (${what}), found ${entityKind(e)}`);
      return null;
    }
    this.use(path);
    return e;
  }

  metadata(d: Dataset, path: string): Metadata | null {
    try {
      return d.metadata;
    } catch (err) {
      this.fail(path, `its metadata cannot be read (${summarizeHdf5Error(err)})`);
      return null;
    }
  }

  /** A string attribute: value, undefined when absent, null when present but not a string (problem recorded). */
  attrString(obj: Group | Dataset, path: string, name: string): string | null | undefined {
    let attr: { metadata: Metadata; value: unknown } | undefined;
    try {
      attr = obj.attrs[name];
    } catch (err) {
      this.fail(`${path}@${name}`, `cannot be read (${summarizeHdf5Error(err)})`);
      return null;
    }
    if (attr === undefined) return undefined;
    if (attr.metadata.type !== 3) {
      this.fail(`${path}@${name}`, `must be a string, found ${dtypeName(attr.metadata)}`);
      return null;
    }
    const v = attr.value;
    if (typeof v === 'string') return v;
    if (Array.isArray(v) && v.length === 1 && typeof v[0] === 'string') return v[0];
    this.fail(`${path}@${name}`, 'must be a single string, found an array');
    return null;
  }

  /** A string-array attribute (a single delimited string is accepted with a warning). */
  attrStringArray(obj: Group, path: string, name: string): string[] | null | undefined {
    const attr = obj.attrs[name];
    if (attr === undefined) return undefined;
    if (attr.metadata.type !== 3) {
      this.fail(`${path}@${name}`, `must be an array of strings, found ${dtypeName(attr.metadata)}`);
      return null;
    }
    const v = attr.value;
    if (Array.isArray(v) && v.every((s) => typeof s === 'string')) return v as string[];
    if (typeof v === 'string') {
      this.warnings.push(
        `${path}@${name}: written as one delimited string "${v}"; NeXus asks for an array of strings (accepted)`,
      );
      return v.split(/[,:\s]+/).filter((s) => s.length > 0);
    }
    this.fail(`${path}@${name}`, 'must be an array of strings');
    return null;
  }

  attrNumber(obj: Group | Dataset, path: string, name: string): number | null | undefined {
    const attr = obj.attrs[name];
    if (attr === undefined) return undefined;
    if (!isNumeric(attr.metadata)) {
      this.fail(`${path}@${name}`, `must be a number, found ${dtypeName(attr.metadata)}`);
      return null;
    }
    const v = attr.value;
    const n = scalarOf(v);
    if (n === null) {
      this.fail(`${path}@${name}`, 'must be a single number');
      return null;
    }
    return n;
  }

  /** Reads a scalar string dataset (fixed or variable length). */
  string(path: string, required: string | null, what: string): string | null {
    const d = this.dataset(path, required, what);
    if (d === null) return null;
    const m = this.metadata(d, path);
    if (m === null) return null;
    if (m.type !== 3) {
      this.fail(path, `must be a string (${what}), found ${dtypeName(m)}`);
      return null;
    }
    if (m.shape === null || elements(m.shape) !== 1) {
      this.fail(path, `must be a single string (${what}), found shape ${fmtShape(m.shape)}`);
      return null;
    }
    let v: unknown;
    try {
      v = d.value;
    } catch (err) {
      this.fail(path, `cannot be read (${summarizeHdf5Error(err)})`);
      return null;
    }
    const s = typeof v === 'string' ? v : Array.isArray(v) && typeof v[0] === 'string' ? v[0] : null;
    if (s === null) {
      this.fail(path, `must be a single string (${what})`);
      return null;
    }
    return s.replace(/\0+$/, '').trim();
  }

  /**
   * Reads a scalar number (shape [] or [1]) and checks its `@units` when `units` is given.
   */
  number(path: string, required: string | null, what: string, units: string | null): number | null {
    const d = this.dataset(path, required, what);
    if (d === null) return null;
    const m = this.metadata(d, path);
    if (m === null) return null;
    if (!isNumeric(m)) {
      this.fail(path, `must be a number (${what}), found ${dtypeName(m)}`);
      return null;
    }
    if (m.shape === null || elements(m.shape) !== 1) {
      this.fail(path, `must be a single number (${what}), found shape ${fmtShape(m.shape)}`);
      return null;
    }
    if (units !== null) this.checkUnits(d, path, units, required !== null);
    let v: unknown;
    try {
      v = d.value;
    } catch (err) {
      this.fail(path, `cannot be read (${summarizeHdf5Error(err)})`);
      return null;
    }
    const n = scalarOf(v);
    if (n === null || !Number.isFinite(n)) {
      this.fail(path, `must be a finite number (${what}), found ${String(n)}`);
      return null;
    }
    return n;
  }

  checkUnits(d: Dataset, path: string, units: string, required: boolean): void {
    const u = this.attrString(d, path, 'units');
    if (u === undefined) this.fail(`${path}@units`, `${required ? 'required: ' : ''}must be "${units}" but missing`);
    else if (u !== null && !unitMatches(u, units)) this.fail(`${path}@units`, `must be "${units}", found "${u}"`);
  }

  /** Reads a 1-D numeric dataset of a given length (or scalar when `allowScalar`). */
  vector(path: string, d: Dataset, length: number, what: string, allowScalar: boolean): number[] | null {
    const m = this.metadata(d, path);
    if (m === null) return null;
    if (!isNumeric(m)) {
      this.fail(path, `must be numbers (${what}), found ${dtypeName(m)}`);
      return null;
    }
    const shape = m.shape;
    const scalarOk = allowScalar && shape !== null && elements(shape) === 1 && shape.length <= 1;
    if (!scalarOk && (shape === null || shape.length !== 1 || shape[0] !== length)) {
      this.fail(path, `must have shape [${length}] (${what}), found ${fmtShape(shape)}`);
      return null;
    }
    let v: unknown;
    try {
      v = d.value;
    } catch (err) {
      this.fail(path, `cannot be read (${summarizeHdf5Error(err)})`);
      return null;
    }
    const arr = toNumberArray(v);
    if (arr === null) {
      this.fail(path, `cannot be read as numbers (${what})`);
      return null;
    }
    const bad = arr.findIndex((x) => !Number.isFinite(x));
    if (bad >= 0) {
      this.fail(path, `element ${bad} is ${arr[bad]}; every value must be finite (${what})`);
      return null;
    }
    return scalarOk ? new Array<number>(length).fill(arr[0] ?? 1) : arr;
  }

  /** Checks the filter pipeline of a dataset against the accepted filters. */
  filters(d: Dataset, path: string, accepted: ReadonlySet<number>): string[] {
    let filters: { id: number; name: string }[];
    try {
      filters = d.filters;
    } catch (err) {
      this.fail(path, `its filter pipeline cannot be read (${summarizeHdf5Error(err)})`);
      return [];
    }
    const names: string[] = [];
    for (const f of filters) {
      const name = BUILTIN_FILTERS[f.id] ?? KNOWN_FILTER_NAMES[f.id] ?? (f.name || `filter ${f.id}`);
      names.push(name);
      if (!accepted.has(f.id)) {
        const plugins = [...accepted].filter((id) => BUILTIN_FILTERS[id] === undefined);
        const extra = plugins.length > 0 ? `, ${plugins.map((id) => KNOWN_FILTER_NAMES[id] ?? id).join(', ')}` : '';
        const hint =
          plugins.length === 0 && [32004, 32008, 32000, 307].includes(f.id)
            ? '; load the h5wasm-plugins compression plugins to read it'
            : '';
        this.fail(
          path,
          `unsupported compression: ${name} (HDF5 filter ${f.id}); Lobeline reads gzip/deflate, shuffle, fletcher32${extra}${hint}`,
        );
      }
    }
    return names;
  }
}

function entityKind(e: Entity): string {
  const t = (e as { type?: string }).type;
  return t === 'ExternalLink'
    ? 'an external link to another file (not followed)'
    : t === 'BrokenSoftLink'
      ? 'a broken soft link'
      : t === 'Dataset'
        ? 'a dataset'
        : t === 'Group'
          ? 'a group'
          : `a ${t ?? 'thing'}`;
}

function scalarOf(v: unknown): number | null {
  if (typeof v === 'number') return v;
  if (typeof v === 'bigint') return Number(v);
  if (typeof v === 'boolean') return v ? 1 : 0;
  if (ArrayBuffer.isView(v) && (v as unknown as ArrayLike<unknown>).length === 1) {
    return scalarOf((v as unknown as ArrayLike<unknown>)[0]);
  }
  if (Array.isArray(v) && v.length === 1) return scalarOf(v[0]);
  return null;
}

function toNumberArray(v: unknown): number[] | null {
  if (typeof v === 'number' || typeof v === 'bigint') return [Number(v)];
  if (ArrayBuffer.isView(v)) return Array.from(v as unknown as ArrayLike<number | bigint>, (x) => Number(x));
  if (Array.isArray(v) && v.every((x) => typeof x === 'number' || typeof x === 'bigint')) return v.map(Number);
  return null;
}

// FRAME CONVERSION //

/** Copies a typed array of any numeric type into a Float64Array. */
function copyToFloat64(src: ArrayLike<number | bigint>, out: Float64Array): void {
  const n = out.length;
  if (src instanceof BigInt64Array || src instanceof BigUint64Array) {
    for (let i = 0; i < n; i++) out[i] = Number(src[i]);
    return;
  }
  out.set(src as ArrayLike<number>);
}

/** First NaN/±Infinity index and first negative index of a frame (−1 when none). */
function scanFrame(a: Float64Array): { nonFinite: number; negative: number; negatives: number } {
  let nonFinite = -1;
  let negative = -1;
  let negatives = 0;
  for (let i = 0; i < a.length; i++) {
    const v = a[i] as number;
    if (!Number.isFinite(v)) {
      if (nonFinite < 0) nonFinite = i;
    } else if (v < 0) {
      negatives++;
      if (negative < 0) negative = i;
    }
  }
  return { nonFinite, negative, negatives };
}

// SCAN FILE //

/** An opened, validated scan file. Frames are read one step at a time. */
export class ScanFile {
  readonly meta: ScanMetadata;
  private readonly file: InstanceType<H5Runtime['File']>;
  private readonly counts: Dataset;
  private readonly background: Dataset | null;
  private singleBackground: Float64Array | null = null;
  private closed = false;
  private readonly onClose: (() => void) | null;

  /** @internal — use `openScanFile`. */
  constructor(args: {
    meta: ScanMetadata;
    file: InstanceType<H5Runtime['File']>;
    counts: Dataset;
    background: Dataset | null;
    onClose: (() => void) | null;
  }) {
    this.meta = args.meta;
    this.file = args.file;
    this.counts = args.counts;
    this.background = args.background;
    this.onClose = args.onClose;
  }

  /** Pixels per frame (n_y · n_x). */
  get framePixels(): number {
    return this.meta.shape.nY * this.meta.shape.nX;
  }

  /**
   * Reads counts of step `k` (row-major n_y × n_x) into a Float64Array.
   *
   * @param k - step index, 0 ≤ k < n_step
   * @param out - optional array of length n_y·n_x to fill
   * @returns the frame
   * @throws ScanReadError naming the step when the read fails or the data are not valid counts
   */
  readFrame(k: number, out?: Float64Array): Float64Array {
    return this.readFrom(this.counts, COUNTS, this.meta.countsIs3d, k, out, 'step');
  }

  /**
   * Reads the background frame that belongs to step `k` (the single frame for a single background).
   *
   * @returns the frame, or null when the file has no background
   */
  readBackground(k: number, out?: Float64Array): Float64Array | null {
    const bg = this.meta.background;
    if (bg === null || this.background === null) return null;
    if (bg.layout === 'single') {
      if (this.singleBackground === null) {
        this.singleBackground = this.readFrom(this.background, `${BACKGROUND}/counts`, false, 0, undefined, 'single');
      }
      if (out) {
        out.set(this.singleBackground);
        return out;
      }
      return this.singleBackground.slice();
    }
    return this.readFrom(this.background, `${BACKGROUND}/counts`, true, k, out, 'step');
  }

  private readFrom(
    d: Dataset,
    path: string,
    is3d: boolean,
    k: number,
    out: Float64Array | undefined,
    label: 'step' | 'single',
  ): Float64Array {
    if (this.closed) throw new ScanReadError(problem(path, 'the file was already closed'));
    const { nStep, nY, nX } = this.meta.shape;
    const where = label === 'step' ? `step ${k}` : 'the background frame';
    if (!Number.isInteger(k) || k < 0 || k >= nStep) {
      throw new ScanReadError(problem(path, `step ${k} does not exist (the scan has ${nStep} steps)`, k));
    }
    const n = nY * nX;
    const frame = out ?? new Float64Array(n);
    if (frame.length !== n) {
      throw new ScanReadError(problem(path, `output array has ${frame.length} elements, a frame has ${n}`, k));
    }
    let raw: unknown;
    try {
      raw = is3d ? d.slice([[k, k + 1], [], []]) : d.slice([[], []]);
    } catch (err) {
      throw new ScanReadError(
        problem(
          path,
          `${where}: the stored data could not be read or decoded (${summarizeHdf5Error(err)}); the file is probably corrupt`,
          k,
        ),
      );
    }
    if (!ArrayBuffer.isView(raw) || (raw as unknown as ArrayLike<number>).length !== n) {
      const got = ArrayBuffer.isView(raw) ? `${(raw as unknown as ArrayLike<number>).length} values` : typeof raw;
      throw new ScanReadError(problem(path, `${where}: read returned ${got}, expected ${n} (${nY}×${nX})`, k));
    }
    copyToFloat64(raw as unknown as ArrayLike<number>, frame);
    const s = scanFrame(frame);
    if (s.nonFinite >= 0) {
      const v = frame[s.nonFinite];
      throw new ScanReadError(
        problem(
          path,
          `${where}: pixel (x ${s.nonFinite % nX}, y ${Math.floor(s.nonFinite / nX)}) is ${v}; counts must be finite`,
          k,
        ),
      );
    }
    if (s.negative >= 0) {
      throw new ScanReadError(
        problem(
          path,
          `${where}: ${s.negatives} pixel(s) have negative counts (first at x ${s.negative % nX}, y ${Math.floor(s.negative / nX)}: ${frame[s.negative]}); counts must be ≥ 0`,
          k,
        ),
      );
    }
    return frame;
  }

  /** Closes the HDF5 file (and removes a scratch copy made from a byte buffer). */
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

/**
 * Opens a scan file that is already in the module's file system (Node: a real path; browser: MEMFS/WORKERFS).
 *
 * @param rt - h5wasm runtime
 * @param path - file path in the module's file system
 * @param options - accepted plugin filters, frame size limit
 * @returns the opened scan with its metadata, or every problem found
 */
export function openScanFile(rt: H5Runtime, path: string, options: OpenScanOptions = {}): OpenScanResult {
  return openInternal(rt, path, options, null);
}

/**
 * Opens a scan file from bytes: writes them to `scratchPath` in the module's file system, opens that, and removes
 * it on close (or at once when the file is refused).
 *
 * @param scratchPath - Node: a temp file path; browser: e.g. `/lobeline-scan-1.h5` in MEMFS
 */
export function openScanBytes(
  rt: H5Runtime,
  bytes: Uint8Array,
  scratchPath: string,
  options: OpenScanOptions = {},
): OpenScanResult {
  return openFromScratch(rt, bytes, scratchPath, (remove) => openInternal(rt, scratchPath, options, remove));
}

/**
 * Writes `bytes` to `scratchPath` in the module's file system and opens it with `open`, which receives the function
 * that removes the scratch file (to be called on close); a refused file is removed at once. Shared by the image and
 * the event reader.
 */
export function openFromScratch<R extends { ok: boolean }>(
  rt: H5Runtime,
  bytes: Uint8Array,
  scratchPath: string,
  open: (remove: () => void) => R,
): R {
  const FS = rt.Module.FS;
  FS.writeFile(scratchPath, bytes);
  const remove = () => {
    try {
      FS.unlink(scratchPath);
    } catch {
      // already gone
    }
  };
  const r = open(remove);
  if (!r.ok) remove();
  return r;
}

/**
 * Like `openScanFile` but throws `ScanFileRefusedError` (with every problem) instead of returning them.
 */
export function openScanFileOrThrow(rt: H5Runtime, path: string, options: OpenScanOptions = {}): ScanFile {
  const r = openScanFile(rt, path, options);
  if (!r.ok) throw new ScanFileRefusedError(r.problems);
  return r.scan;
}

export function readBytes(
  rt: H5Runtime,
  path: string,
): { size: number; read: (pos: number, len: number) => Uint8Array } {
  const FS = rt.Module.FS;
  const size = FS.stat(path).size;
  return {
    size,
    read: (pos: number, len: number) => {
      const want = Math.max(0, Math.min(len, size - pos));
      const buf = new Uint8Array(want);
      if (want === 0) return buf;
      const stream = FS.open(path, 'r');
      try {
        const got = FS.read(stream, buf, 0, want, pos);
        return got === want ? buf : buf.subarray(0, got);
      } finally {
        FS.close(stream);
      }
    },
  };
}

function openInternal(
  rt: H5Runtime,
  path: string,
  options: OpenScanOptions,
  onClose: (() => void) | null,
): OpenScanResult {
  const fileProblem = (rule: string): OpenScanResult => ({
    ok: false,
    problems: [problem('(file)', rule)],
    warnings: [],
    extraPaths: [],
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
  if (typeof file.file_id === 'bigint' && file.file_id < 0n) {
    return fileProblem('the HDF5 library could not open the file (damaged superblock or header)');
  }
  const accepted = new Set<number>([1, 2, 3, ...(options.acceptedPluginFilters ?? rt.pluginFilterIds)]);
  let result: ReturnType<typeof validate>;
  try {
    result = validate(rt, file, accepted, options.maxFrameBytes ?? 512 * 1024 * 1024);
  } catch (err) {
    safeClose(file);
    return fileProblem(`the file's structure could not be read: ${summarizeHdf5Error(err)}`);
  }
  const { checker, meta, counts, background } = result;
  if (checker.problems.length > 0 || meta === null || counts === null) {
    const extraPaths = listExtraPaths(rt, file, checker.used, true);
    safeClose(file);
    return { ok: false, problems: checker.problems, warnings: checker.warnings, extraPaths };
  }
  return { ok: true, scan: new ScanFile({ meta, file, counts, background, onClose }), warnings: checker.warnings };
}

export function safeClose(file: { close(): unknown }): void {
  try {
    file.close();
  } catch {
    // nothing more to do
  }
}

// VALIDATE //

/**
 * Validates the entry's metadata (identification, sample, source, detector) of an event file (FORMATS §1.1) with the
 * same rules as an image file; `data/` and `background/` are not read. `checkEvents` checks the event groups with
 * the same checker before the extra content is listed. The metadata returned has placeholders for the shape, the
 * steps and the shots, which the event reader fills in.
 */
export function validateEventEntry(
  rt: H5Runtime,
  file: InstanceType<H5Runtime['File']>,
  accepted: ReadonlySet<number>,
  checkEvents: (c: Checker) => void,
): { checker: Checker; meta: ScanMetadata | null } {
  const r = validate(rt, file, accepted, 512 * 1024 * 1024, checkEvents);
  return { checker: r.checker, meta: r.meta };
}

function validate(
  rt: H5Runtime,
  file: InstanceType<H5Runtime['File']>,
  accepted: ReadonlySet<number>,
  maxFrameBytes: number,
  checkEvents: ((c: Checker) => void) | null = null,
): { checker: Checker; meta: ScanMetadata | null; counts: Dataset | null; background: Dataset | null } {
  const c = new Checker(rt, file);
  const eventsMode = checkEvents !== null;

  // entry and identification
  const entry = c.group(ENTRY, 'NXentry', 'required: the NXentry group that holds the scan');
  if (entry === null) return { checker: c, meta: null, counts: null, background: null };

  const kindRaw = c.string(
    `${ENTRY}/experiment_kind`,
    'required for every scan',
    `one of ${EXPERIMENT_KINDS.join(', ')}`,
  );
  let kind: ExperimentKind | null = null;
  if (kindRaw !== null) {
    if ((EXPERIMENT_KINDS as readonly string[]).includes(kindRaw)) kind = kindRaw as ExperimentKind;
    else c.fail(`${ENTRY}/experiment_kind`, `must be one of ${EXPERIMENT_KINDS.join(', ')}, found "${kindRaw}"`);
  }
  const startTime = c.string(`${ENTRY}/start_time`, 'required for every scan', 'ISO 8601 time with offset');
  if (startTime !== null && (!ISO_8601_WITH_OFFSET.test(startTime) || Number.isNaN(Date.parse(startTime)))) {
    c.fail(
      `${ENTRY}/start_time`,
      `must be an ISO 8601 time with a UTC offset, e.g. 2026-03-14T09:30:00+01:00; found "${startTime}"`,
    );
  }
  /** Required content is checked as it is; content that is optional here is read through `c.optional`. */
  const maybe = <T>(required: string | null, instead: string, read: () => T | null): T | null =>
    required !== null ? read() : c.optional(instead, read);
  const title = c.optional('the scan is shown without a title', () => c.string(`${ENTRY}/title`, null, 'scan title'));

  // sample
  const sampleGroup = c.group(`${ENTRY}/sample`, 'NXsample', 'required: the NXsample group naming the target');
  let target: string | null = null;
  let ipEv: number | null = null;
  if (sampleGroup !== null) {
    target = c.string(`${ENTRY}/sample/name`, 'required for every scan', 'target, e.g. He, Ar, N2');
    if (target !== null && target.length === 0) c.fail(`${ENTRY}/sample/name`, 'must not be empty');
    const known = target !== null && ionizationEnergyEv(target) !== null;
    const ipRequired =
      target !== null && !known
        ? `required because the target "${target}" is not in Lobeline's table of ionization energies`
        : null;
    ipEv = maybe(ipRequired, "the ionization energy from Lobeline's table is used", () => {
      const v = c.number(`${ENTRY}/sample/ionization_energy`, ipRequired, 'ionization energy in eV', 'eV');
      if (v !== null && !(v > 0 && v < 1000)) {
        c.fail(`${ENTRY}/sample/ionization_energy`, `must be in (0, 1000) eV, found ${v}`);
        return null;
      }
      return v;
    });
  }

  // instrument / source
  const instrument = c.group(`${ENTRY}/instrument`, null, 'required: the instrument group holding source/');
  if (instrument !== null) checkOptionalClass(c, instrument, `${ENTRY}/instrument`, 'NXinstrument');
  const sourceGroup = instrument
    ? c.group(SOURCE, null, 'required: the laser source group (wavelength, ellipticity, helicity, …)')
    : null;
  if (sourceGroup !== null) checkOptionalClass(c, sourceGroup, SOURCE, 'NXsource');
  const src = sourceGroup !== null;
  const wavelength = src
    ? c.number(`${SOURCE}/wavelength`, 'required for every scan', 'fundamental wavelength in nm', 'nm')
    : null;
  if (wavelength !== null && !(wavelength > 0)) c.fail(`${SOURCE}/wavelength`, `must be > 0 nm, found ${wavelength}`);
  else if (wavelength !== null && (wavelength < 100 || wavelength > 20000)) {
    c.warnings.push(`${SOURCE}/wavelength: ${wavelength} nm is outside 100–20 000 nm; check the units`);
  }
  const needEll = kind === 'angular_streaking' ? 'required for angular_streaking scans' : null;
  const ellipticity = !src
    ? null
    : maybe(needEll, 'the scan is reduced without an ellipticity', () => {
        const v = c.number(`${SOURCE}/ellipticity`, needEll, 'ε = F_minor/F_major in [0, 1], 1 = circular', null);
        if (v !== null && !(v >= 0 && v <= 1)) {
          c.fail(
            `${SOURCE}/ellipticity`,
            `must be in [0, 1] (ε = F_minor/F_major; the sign goes in helicity), found ${v}`,
          );
          return null;
        }
        return v;
      });
  const needHel = kind === 'angular_streaking' || kind === 'bicircular' ? `required for ${kind} scans` : null;
  const helicity: 1 | -1 | null = !src
    ? null
    : maybe(needHel, 'the scan is reduced without a helicity', () => {
        const v = c.number(`${SOURCE}/helicity`, needHel, 'h = +1 or −1, sense of field rotation seen from +z', null);
        if (v === null) return null;
        if (v === 1 || v === -1) return v;
        c.fail(`${SOURCE}/helicity`, `must be +1 or −1 (sense of field rotation seen from +z), found ${v}`);
        return null;
      });
  const majorAxis = !src
    ? null
    : c.optional('the default 0° is used', () =>
        c.number(`${SOURCE}/major_axis_angle`, null, 'lab azimuth of the major axis', 'deg'),
      );
  const needRatio = kind === 'bicircular' || kind === 'two_color_phase' ? `required for ${kind} scans` : null;
  const fieldRatio = !src
    ? null
    : maybe(needRatio, 'the scan is reduced without a field ratio', () => {
        const v = c.number(`${SOURCE}/field_ratio`, needRatio, 'F(2ω)/F(ω)', null);
        if (v !== null && !(v > 0 && v < 100)) {
          c.fail(`${SOURCE}/field_ratio`, `must be a positive ratio F(2ω)/F(ω), found ${v}`);
          return null;
        }
        return v;
      });
  const relPhase = !src
    ? null
    : c.optional('the default 0 rad is used', () =>
        c.number(`${SOURCE}/relative_phase`, null, 'fixed ω–2ω phase in rad', 'rad'),
      );
  const pulse = !src
    ? null
    : c.optional('the scan is reduced without a pulse duration', () => {
        const v = c.number(`${SOURCE}/pulse_duration`, null, 'pulse duration in fs', 'fs');
        if (v !== null && !(v > 0)) {
          c.fail(`${SOURCE}/pulse_duration`, `must be > 0 fs, found ${v}`);
          return null;
        }
        return v;
      });
  const convention = !src
    ? null
    : c.optional('the default cycle_averaged_total is used', () => {
        const v = c.string(`${SOURCE}/intensity_convention`, null, 'intensity convention');
        if (v !== null && !(INTENSITY_CONVENTIONS as readonly string[]).includes(v)) {
          c.fail(`${SOURCE}/intensity_convention`, `must be one of ${INTENSITY_CONVENTIONS.join(', ')}, found "${v}"`);
          return null;
        }
        return v;
      });
  const delaySignRaw = !src
    ? null
    : c.optional('the default −1 is used', () => {
        const v = c.number(`${SOURCE}/delay_sign`, null, 'φ = delay_sign · 2ωτ', null);
        if (v !== null && v !== 1 && v !== -1) {
          c.fail(`${SOURCE}/delay_sign`, `must be +1 or −1 (φ = delay_sign · 2ωτ), found ${v}`);
          return null;
        }
        return v;
      });

  // detector (optional)
  const DETECTOR = `${ENTRY}/instrument/detector`;
  const detector = instrument
    ? c.optional('the scan is read without detector details', () => c.group(DETECTOR, null, null))
    : null;
  if (detector !== null) checkOptionalClass(c, detector, DETECTOR, 'NXdetector');
  const detDesc = detector
    ? c.optional('the scan is read without a detector description', () =>
        c.string(`${DETECTOR}/description`, null, 'detector description'),
      )
    : null;
  const mpp = detector
    ? c.optional('a calibration must give the momentum scale', () => {
        const v = c.number(`${DETECTOR}/momentum_per_pixel`, null, 'nominal momentum per pixel', 'a.u.');
        if (v !== null && !(v > 0)) {
          c.fail(`${DETECTOR}/momentum_per_pixel`, `must be > 0 a.u. per pixel, found ${v}`);
          return null;
        }
        return v;
      })
    : null;

  // data
  const dataGroup = eventsMode ? null : c.group(DATA, 'NXdata', 'required: the NXdata group holding counts');
  let counts: Dataset | null = null;
  let shape: { nStep: number; nY: number; nX: number } | null = null;
  let is3d = false;
  let dtype = '';
  let countsFilters: string[] = [];
  let countsChunks: number[] | null = null;
  let stepInfo: ScanMetadata['step'] | null = null;
  let shots: number[] | null = null;
  let xAxis: number[] | null = null;
  let yAxis: number[] | null = null;
  if (dataGroup !== null) {
    counts = c.dataset(COUNTS, 'required', 'counts per pixel, [n_step, n_y, n_x] or [n_y, n_x]');
    const m = counts ? c.metadata(counts, COUNTS) : null;
    if (counts !== null && m !== null) {
      const r = checkCounts(c, counts, COUNTS, m, accepted, maxFrameBytes, 'counts');
      if (r !== null) {
        shape = r.shape;
        is3d = r.is3d;
        dtype = r.dtype;
        countsFilters = r.filters;
        countsChunks = m.chunks;
      }
    }
    const signal = c.attrString(dataGroup, DATA, 'signal');
    if (signal === undefined) c.fail(`${DATA}@signal`, 'required: must be "counts" (NeXus NXdata) but missing');
    else if (signal !== null && signal !== 'counts') c.fail(`${DATA}@signal`, `must be "counts", found "${signal}"`);
    const axes = c.attrStringArray(dataGroup, DATA, 'axes');
    if (shape !== null) {
      const want = is3d ? ['step', 'y', 'x'] : ['y', 'x'];
      const wantText = `["${want.join('", "')}"]`;
      if (axes === undefined) {
        c.fail(`${DATA}@axes`, `required: must be ${wantText} for ${is3d ? '3-D' : '2-D'} counts but missing`);
      } else if (axes !== null && (axes.length !== want.length || axes.some((a, i) => a !== want[i]))) {
        c.fail(
          `${DATA}@axes`,
          `must be ${wantText} for ${is3d ? '3-D' : '2-D'} counts, found ["${axes.join('", "')}"]`,
        );
      }
    }
    if (shape !== null) {
      // step axis
      const stepPath = `${DATA}/step`;
      const stepD = c.dataset(
        stepPath,
        is3d ? 'required with 3-D counts' : null,
        `the scanned quantity, one value per step; @quantity one of ${STEP_QUANTITIES.join(', ')}`,
      );
      if (stepD !== null && is3d) {
        const q = c.attrString(stepD, stepPath, 'quantity');
        const u = c.attrString(stepD, stepPath, 'units');
        let quantity: StepQuantity | null = null;
        if (q === undefined) {
          c.fail(`${stepPath}@quantity`, `required: one of ${STEP_QUANTITIES.join(', ')} but missing`);
        } else if (q !== null) {
          if ((STEP_QUANTITIES as string[]).includes(q)) quantity = q as StepQuantity;
          else c.fail(`${stepPath}@quantity`, `must be one of ${STEP_QUANTITIES.join(', ')}, found "${q}"`);
        }
        if (u === undefined) {
          c.fail(
            `${stepPath}@units`,
            `required${quantity ? `: must be "${STEP_UNITS[quantity]}" for ${quantity}` : ''} but missing`,
          );
        } else if (u !== null && quantity !== null && !unitMatches(u, STEP_UNITS[quantity])) {
          c.fail(`${stepPath}@units`, `must be "${STEP_UNITS[quantity]}" for step quantity ${quantity}, found "${u}"`);
        }
        const values = c.vector(stepPath, stepD, shape.nStep, 'one value per step', false);
        if (values !== null && quantity === 'intensity' && values.some((v) => !(v > 0))) {
          c.fail(stepPath, 'intensities must be > 0 W/cm^2');
        }
        if (values !== null && quantity === 'ellipticity' && values.some((v) => v < 0 || v > 1)) {
          c.fail(stepPath, 'ellipticities must be in [0, 1]');
        }
        if (quantity !== null && values !== null) {
          stepInfo = { quantity, units: STEP_UNITS[quantity], values };
        }
        if (kind === 'two_color_phase' && quantity !== null && quantity !== 'relative_phase' && quantity !== 'delay') {
          c.fail(`${stepPath}@quantity`, `two_color_phase scans step relative_phase or delay, found "${quantity}"`);
        }
      } else if (!is3d) {
        if (stepD !== null) c.used.delete(stepPath); // not used with one image: shown as extra content
        stepInfo = { quantity: 'index', units: '1', values: [0] };
      }
      if (kind === 'two_color_phase' && !is3d) {
        c.fail(COUNTS, 'two_color_phase scans need 3-D counts [n_step, n_y, n_x] (one frame per relative phase)');
      }
      const nStep = shape.nStep;
      const readShots = c.optional('every step counts as 1 shot', () => {
        const shotsD = c.dataset(`${DATA}/shots`, null, 'laser shots per step');
        if (shotsD === null) return null;
        const v = c.vector(`${DATA}/shots`, shotsD, nStep, 'laser shots per step', !is3d);
        if (v?.some((s) => !(s > 0))) {
          c.fail(`${DATA}/shots`, 'shots must be > 0');
          return null;
        }
        return v;
      });
      shots = readShots ?? new Array<number>(nStep).fill(1);
      for (const [axis, n] of [
        ['x', shape.nX],
        ['y', shape.nY],
      ] as const) {
        const p = `${DATA}/${axis}`;
        const v = c.optional(`the default pixel axis 0…${n - 1} is used`, () => {
          const d = c.dataset(p, null, `pixel axis ${axis}`);
          if (d === null) return null;
          const u = c.attrString(d, p, 'units');
          if (u === undefined) c.fail(`${p}@units`, 'must be "pixel" but missing');
          else if (u !== null && !unitMatches(u, 'pixel')) c.fail(`${p}@units`, `must be "pixel", found "${u}"`);
          return c.vector(p, d, n, `one value per ${axis === 'x' ? 'column' : 'row'}`, false);
        });
        if (axis === 'x') xAxis = v;
        else yAxis = v;
      }
    }
  }

  // background
  let background: Dataset | null = null;
  let backgroundInfo: ScanMetadata['background'] = null;
  const bgEntity = eventsMode ? null : c.get(BACKGROUND);
  const nFramesWanted = shape;
  const bgRead =
    bgEntity === null || nFramesWanted === null
      ? null
      : c.optional('nothing is subtracted as background', () => {
          const bgGroup = c.group(BACKGROUND, 'NXdata', 'optional');
          if (bgGroup === null) return null;
          const bgPath = `${BACKGROUND}/counts`;
          const bd = c.dataset(bgPath, 'required when the background group exists', 'background frames');
          const bm = bd ? c.metadata(bd, bgPath) : null;
          if (bd === null || bm === null) return null;
          const r = checkCounts(c, bd, bgPath, bm, accepted, maxFrameBytes, 'background');
          if (r === null) return null;
          const single = !r.is3d;
          const { nStep, nY, nX } = nFramesWanted;
          if (r.shape.nY !== nY || r.shape.nX !== nX) {
            c.fail(bgPath, `frames must be ${nY}×${nX} like the counts, found ${r.shape.nY}×${r.shape.nX}`);
            return null;
          }
          if (!single && r.shape.nStep !== nStep) {
            c.fail(
              bgPath,
              `must be [${nY}, ${nX}] (one frame) or [${nStep}, ${nY}, ${nX}] (one per step), found ${r.shape.nStep} frames`,
            );
            return null;
          }
          const nFrames = single ? 1 : nStep;
          const bsPath = `${BACKGROUND}/shots`;
          const bs = c.dataset(bsPath, null, 'shots behind the background');
          let bShots: number[] | null = new Array<number>(nFrames).fill(1);
          if (bs !== null) bShots = c.vector(bsPath, bs, nFrames, 'shots behind the background', true);
          if (bShots?.some((x) => !(x > 0))) {
            c.fail(bsPath, 'shots must be > 0');
            return null;
          }
          if (bShots === null) return null;
          return { bd, info: { layout: single ? ('single' as const) : ('per_step' as const), shots: bShots } };
        });
  if (bgRead !== null) {
    background = bgRead.bd;
    backgroundInfo = bgRead.info;
  }

  if (checkEvents !== null) {
    checkEvents(c);
    // placeholders the event reader replaces: one virtual pixel, the steps of the event list
    shape = { nStep: 1, nY: 1, nX: 1 };
    stepInfo = { quantity: 'index', units: '1', values: [0] };
    shots = [1];
    dtype = 'float64';
  }
  const extraPaths = listExtraPaths(rt, file, c.used, false);
  if (
    c.problems.length > 0 ||
    kind === null ||
    startTime === null ||
    target === null ||
    wavelength === null ||
    shape === null ||
    stepInfo === null ||
    shots === null
  ) {
    if (c.problems.length === 0) c.fail('(file)', 'the scan metadata are incomplete');
    return { checker: c, meta: null, counts: null, background: null };
  }
  const meta: ScanMetadata = {
    experimentKind: kind,
    startTime,
    title,
    target,
    ionizationEnergyEv: ipEv,
    wavelengthNm: wavelength,
    ellipticity,
    helicity,
    majorAxisAngleDeg: majorAxis ?? 0,
    fieldRatio,
    relativePhaseRad: relPhase ?? 0,
    pulseDurationFs: pulse,
    intensityConvention: convention ?? 'cycle_averaged_total',
    delaySign: delaySignRaw === 1 ? 1 : -1,
    detectorDescription: detDesc,
    nominalMomentumPerPixelAu: mpp,
    shape,
    countsIs3d: is3d,
    countsDtype: dtype,
    countsFilters,
    countsChunks,
    step: stepInfo,
    shots,
    xAxis,
    yAxis,
    background: backgroundInfo,
    events: null,
    extraPaths,
  };
  return { checker: c, meta, counts, background };
}

/** NX_class on optional-class groups: a different value is only a warning. */
function checkOptionalClass(c: Checker, g: Group, path: string, nxClass: string): void {
  const cls = c.attrString(g, path, 'NX_class');
  if (typeof cls === 'string' && cls !== nxClass) {
    c.warnings.push(`${path}@NX_class: expected "${nxClass}", found "${cls}" (accepted)`);
  }
}

/** Checks a counts-like dataset: rank, dtype, limits, frame size, filters. Nothing is allocated. */
function checkCounts(
  c: Checker,
  d: Dataset,
  path: string,
  m: Metadata,
  accepted: ReadonlySet<number>,
  maxFrameBytes: number,
  what: 'counts' | 'background',
): { shape: { nStep: number; nY: number; nX: number }; is3d: boolean; dtype: string; filters: string[] } | null {
  let ok = true;
  const dtype = dtypeName(m);
  if (!isNumeric(m) || !(COUNTS_DTYPES as readonly string[]).includes(dtype)) {
    c.fail(path, `${what} must be one of ${COUNTS_DTYPES.join(', ')}, found ${dtype}`);
    ok = false;
  }
  const s = m.shape;
  if (s === null || (s.length !== 2 && s.length !== 3)) {
    c.fail(
      path,
      `${what} must be 3-D [n_step, n_y, n_x] or 2-D [n_y, n_x], found ${s === null ? 'no dataspace' : `${s.length}-D ${fmtShape(s)}`}`,
    );
    return null;
  }
  const is3d = s.length === 3;
  const nStep = is3d ? (s[0] as number) : 1;
  const nY = s[is3d ? 1 : 0] as number;
  const nX = s[is3d ? 2 : 1] as number;
  if (nStep < 1 || nY < 1 || nX < 1) {
    c.fail(path, `${what} is empty, shape ${fmtShape(s)}`);
    ok = false;
  }
  if (nX > SCAN_LIMITS.maxNx || nY > SCAN_LIMITS.maxNy) {
    c.fail(
      path,
      `frame ${nY}×${nX} exceeds the limit of ${SCAN_LIMITS.maxNy}×${SCAN_LIMITS.maxNx} pixels (refused before reading)`,
    );
    ok = false;
  }
  if (nStep > SCAN_LIMITS.maxSteps) {
    c.fail(path, `${nStep} steps exceed the limit of ${SCAN_LIMITS.maxSteps} (refused before reading)`);
    ok = false;
  }
  if (nStep * nY * nX > SCAN_LIMITS.maxElements) {
    c.fail(
      path,
      `${nStep}×${nY}×${nX} = ${nStep * nY * nX} values exceed the limit of 2^31 per scan (refused before reading)`,
    );
    ok = false;
  }
  if (ok && nY * nX * m.size > maxFrameBytes) {
    c.fail(path, `one frame takes ${nY * nX * m.size} bytes, more than the ${maxFrameBytes} allowed`);
    ok = false;
  }
  const vs = (m as Metadata & { virtual_sources?: unknown[] }).virtual_sources;
  if (Array.isArray(vs) && vs.length > 0) {
    c.fail(path, `is a virtual dataset built from ${vs.length} source(s); store the frames in the file itself`);
    ok = false;
  }
  const filters = c.filters(d, path, accepted);
  if (m.chunks !== null && m.chunks.length === s.length) {
    const chunkFrameBytes = m.chunks.slice(-2).reduce((a, b) => a * b, 1) * m.size;
    if (chunkFrameBytes > maxFrameBytes * 4) {
      c.fail(path, `chunks of ${fmtShape(m.chunks)} are too large to read frame by frame`);
      ok = false;
    }
  }
  return ok ? { shape: { nStep, nY, nX }, is3d, dtype, filters } : null;
}

// EXTRA CONTENT //

/**
 * Lists every object path not used by the reader (groups that only lead to used objects are not listed).
 *
 * @param limit - stop after this many paths
 */
function listExtraPaths(rt: H5Runtime, file: Group, used: ReadonlySet<string>, quiet: boolean, limit = 500): string[] {
  const out: string[] = [];
  const M = rt.Module;
  const walk = (g: Group, base: string, depth: number) => {
    let keys: string[];
    try {
      keys = g.keys();
    } catch {
      return;
    }
    for (const k of keys) {
      if (out.length >= limit) return;
      const p = base === '/' ? `/${k}` : `${base}/${k}`;
      let t = -1;
      try {
        t = M.get_type(g.file_id, p);
      } catch {
        // unknown
      }
      const isLink = t === M.H5G_LINK || t === M.H5G_UDLINK;
      if (isLink) {
        if (!used.has(p)) out.push(p);
        continue;
      }
      if (used.has(p)) {
        if (t === M.H5G_GROUP && depth < 16) {
          const child = safeGet(g, k);
          if (child instanceof rt.Group) walk(child, p, depth + 1);
        }
        continue;
      }
      out.push(p);
      if (t === M.H5G_GROUP && depth < 16) {
        const child = safeGet(g, k);
        if (child instanceof rt.Group) walk(child, p, depth + 1);
      }
    }
  };
  try {
    walk(file, '/', 0);
  } catch (err) {
    if (!quiet) throw err;
  }
  return out;
}

function safeGet(g: Group, k: string): Entity | null {
  try {
    return g.get(k) ?? null;
  } catch {
    return null;
  }
}
