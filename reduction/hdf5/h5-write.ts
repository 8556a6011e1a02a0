/**
 * Small writing helpers over h5wasm: groups with NX_class, scalar/string datasets with units, and chunked
 * datasets created at their full shape without data (so that frames can be written one slice at a time and memory
 * stays bounded). Used by the result-file writer and the synthetic scan generator.
 */
import type { Dataset, Group } from 'h5wasm';
import type { H5Runtime } from './runtime';

// TYPES //

/** h5wasm dtype strings (struct codes): f float32, d float64, H uint16, B uint8, I uint32, h int16, i int32. */
export type NumericDtype = '<f' | '<d' | '<H' | '<B' | '<I' | '<h' | '<i';

// FUNCTIONS //

/** Creates a child group and sets its `NX_class` (and other string attributes). */
export function createNxGroup(
  parent: Group,
  name: string,
  nxClass: string | null,
  attrs: Record<string, string> = {},
): Group {
  const g = parent.create_group(name);
  if (nxClass !== null) g.create_attribute('NX_class', nxClass);
  for (const [k, v] of Object.entries(attrs)) g.create_attribute(k, v);
  return g;
}

/** Writes a scalar string dataset (variable-length UTF-8). */
export function writeString(parent: Group, name: string, value: string): Dataset {
  return parent.create_dataset({ name, data: value });
}

/** Writes a scalar number with an optional `units` attribute. */
export function writeScalar(
  parent: Group,
  name: string,
  value: number,
  units: string | null = null,
  dtype: NumericDtype = '<d',
): Dataset {
  const data = dtype === '<i' ? Int32Array.of(value) : Float64Array.of(value);
  const d = parent.create_dataset({ name, data, shape: [], dtype });
  if (units !== null) d.create_attribute('units', units);
  return d;
}

/** Writes a 1-D float64 dataset with an optional `units` attribute. */
export function writeVector(
  parent: Group,
  name: string,
  values: ArrayLike<number>,
  units: string | null = null,
): Dataset {
  const d = parent.create_dataset({ name, data: Float64Array.from(values), dtype: '<d' });
  if (units !== null) d.create_attribute('units', units);
  return d;
}

/**
 * Creates a chunked dataset of its full `shape` without writing data: it is created empty along the first axis and
 * resized, so HDF5 allocates chunks only when slices are written.
 *
 * @param chunks - chunk shape (default one frame: [1, …shape[1:]])
 * @param compression - 'gzip' (level 4), a filter id with options, or null
 */
export function createChunkedDataset(
  parent: Group,
  name: string,
  shape: number[],
  dtype: NumericDtype,
  options: { chunks?: number[]; compression?: 'gzip' | { id: number; opts: number[] } | null } = {},
): Dataset {
  const chunks = options.chunks ?? [1, ...shape.slice(1)];
  const emptyShape = [0, ...shape.slice(1)];
  const c = options.compression ?? null;
  const d = parent.create_dataset({
    name,
    data: dtype === '<f' ? new Float32Array(0) : dtype === '<H' ? new Uint16Array(0) : new Float64Array(0),
    shape: emptyShape,
    maxshape: shape,
    chunks,
    dtype,
    ...(c === 'gzip' ? { compression: 'gzip' as const, compression_opts: 4 } : {}),
    ...(c !== null && c !== 'gzip' ? { compression: c.id, compression_opts: c.opts } : {}),
  });
  d.resize(shape);
  return d;
}

/** Converts a Float64Array frame to the typed array of a dtype (uint16 is rounded and clipped to 0…65535). */
export function frameForDtype(frame: Float64Array, dtype: NumericDtype): Float32Array | Float64Array | Uint16Array {
  if (dtype === '<f') return Float32Array.from(frame);
  if (dtype === '<H') {
    const out = new Uint16Array(frame.length);
    for (let i = 0; i < frame.length; i++) {
      const v = Math.round(frame[i] as number);
      out[i] = v < 0 ? 0 : Math.min(v, 65535);
    }
    return out;
  }
  return frame;
}

/** The dataset at `path` of a freshly opened file (typed). */
export function datasetAt(rt: H5Runtime, g: Group, path: string): Dataset {
  const d = g.get(path);
  if (!(d instanceof rt.Dataset)) throw new Error(`${path} is not a dataset`);
  return d;
}
