/**
 * Applies an analyst's metadata override (schemas.ts `metadataOverrideSchema`) to a scratch COPY of a scan file,
 * so the reader's full validation can run again with the corrected values. The stored raw object never changes;
 * the override is recorded with the raw file and readers apply it the same way.
 *
 * Each field maps to its path of FORMATS §1. A missing dataset is created (with its `@units`); an existing numeric
 * one-element array is overwritten in place and read back. An existing text or scalar-dataspace dataset cannot be
 * rewritten with h5wasm (it has no link deletion, and writes need a hyperslab), which is reported as a sentence so
 * the analyst can accept with a reason or upload a replacement instead. Node only (copies a file on disk).
 */
import { randomBytes } from 'node:crypto';
import { copyFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import type { Dataset, Group } from 'h5wasm';
import type { H5Runtime } from '@/reduction/hdf5/runtime';
import { summarizeHdf5Error } from '@/reduction/hdf5/runtime';
import type { MetadataOverride } from './schemas';

// VARIABLES //

interface FieldPath {
  group: string;
  name: string;
  kind: 'string' | 'float' | 'int';
  units?: string;
}

/** Where each override field lives in the file (paths of FORMATS §1). */
export const OVERRIDE_PATHS: Record<keyof MetadataOverride, FieldPath> = {
  experimentKind: { group: '/entry', name: 'experiment_kind', kind: 'string' },
  startTime: { group: '/entry', name: 'start_time', kind: 'string' },
  title: { group: '/entry', name: 'title', kind: 'string' },
  target: { group: '/entry/sample', name: 'name', kind: 'string' },
  ionizationEnergyEv: { group: '/entry/sample', name: 'ionization_energy', kind: 'float', units: 'eV' },
  wavelengthNm: { group: '/entry/instrument/source', name: 'wavelength', kind: 'float', units: 'nm' },
  ellipticity: { group: '/entry/instrument/source', name: 'ellipticity', kind: 'float' },
  helicity: { group: '/entry/instrument/source', name: 'helicity', kind: 'int' },
  majorAxisAngleDeg: { group: '/entry/instrument/source', name: 'major_axis_angle', kind: 'float', units: 'deg' },
  fieldRatio: { group: '/entry/instrument/source', name: 'field_ratio', kind: 'float' },
  pulseDurationFs: { group: '/entry/instrument/source', name: 'pulse_duration', kind: 'float', units: 'fs' },
};

const NX_CLASS_OF: Record<string, string> = {
  '/entry': 'NXentry',
  '/entry/sample': 'NXsample',
  '/entry/instrument': 'NXinstrument',
  '/entry/instrument/source': 'NXsource',
};

// FUNCTIONS //

function ensureGroup(rt: H5Runtime, root: Group, groupPath: string): Group {
  let current = root;
  let at = '';
  for (const part of groupPath.split('/').filter(Boolean)) {
    at += `/${part}`;
    const e = current.get(part);
    if (e instanceof rt.Group) {
      current = e;
      continue;
    }
    if (e !== null && e !== undefined) throw new Error(`${at} exists but is not a group`);
    const g = current.create_group(part);
    const nxClass = NX_CLASS_OF[at];
    if (nxClass) g.create_attribute('NX_class', nxClass);
    current = g;
  }
  return current;
}

function setUnits(d: Dataset, units: string | undefined): void {
  if (!units) return;
  if (d.attrs.units !== undefined) d.delete_attribute('units');
  d.create_attribute('units', units);
}

/**
 * Writes the override into a scratch copy of `filePath`.
 *
 * @returns the copy's path and a cleanup function, or the sentences saying which fields cannot be corrected
 */
export async function applyMetadataOverride(
  rt: H5Runtime,
  filePath: string,
  override: MetadataOverride,
): Promise<{ ok: true; path: string; cleanup: () => Promise<void> } | { ok: false; problems: string[] }> {
  const copy = path.join(tmpdir(), `lobeline-override-${process.pid}-${randomBytes(6).toString('hex')}.h5`);
  await copyFile(filePath, copy);
  const cleanup = () => rm(copy, { force: true });
  const problems: string[] = [];
  let file: InstanceType<H5Runtime['File']> | null = null;
  try {
    file = new rt.File(copy, 'a');
    for (const [field, value] of Object.entries(override) as [keyof MetadataOverride, unknown][]) {
      const spec = OVERRIDE_PATHS[field];
      if (!spec || value === undefined) continue;
      const where = `${spec.group}/${spec.name}`;
      try {
        const group = ensureGroup(rt, file, spec.group);
        const existing = group.get(spec.name);
        if (existing === null || existing === undefined) {
          const d =
            spec.kind === 'string'
              ? group.create_dataset({ name: spec.name, data: String(value) })
              : group.create_dataset({
                  name: spec.name,
                  data: spec.kind === 'int' ? Int32Array.of(Number(value)) : Float64Array.of(Number(value)),
                  shape: [],
                });
          setUnits(d, spec.units);
          continue;
        }
        if (!(existing instanceof rt.Dataset)) {
          problems.push(`${where}: exists but is not a dataset, so the override cannot replace it`);
          continue;
        }
        const m = existing.metadata;
        const numeric = m.type === 0 || m.type === 1;
        // h5wasm writes only through hyperslabs, which a scalar dataspace (shape []) does not have
        const scalar = m.shape !== null && m.shape.length > 0 && m.shape.reduce((a, b) => a * b, 1) === 1;
        if (spec.kind === 'string' || !numeric || !scalar) {
          problems.push(
            `${where}: the stored value cannot be rewritten by an override (${spec.kind === 'string' ? 'text' : 'a stored number of this layout'}); accept the file with a reason or upload a corrected file`,
          );
          continue;
        }
        const data = m.type === 1 ? Float64Array.of(Number(value)) : Int32Array.of(Number(value));
        existing.write_slice(
          m.shape!.map(() => [0, 1] as [number, number]),
          data,
        );
        const back = Number(
          (existing.value as ArrayLike<number> | number | null) instanceof Object
            ? (existing.value as ArrayLike<number>)[0]
            : existing.value,
        );
        if (Math.abs(back - Number(value)) > 1e-9 * Math.max(1, Math.abs(Number(value)))) {
          problems.push(`${where}: the corrected value could not be written (read back ${back})`);
          continue;
        }
        setUnits(existing, spec.units);
      } catch (err) {
        problems.push(`${where}: the override could not be applied (${summarizeHdf5Error(err)})`);
      }
    }
  } catch (err) {
    problems.push(`(file): the file could not be opened to apply the override (${summarizeHdf5Error(err)})`);
  } finally {
    try {
      file?.close();
    } catch {
      // closing a half-written copy; it is removed below on failure
    }
  }
  if (problems.length) {
    await cleanup();
    return { ok: false, problems };
  }
  return { ok: true, path: copy, cleanup };
}

/** The result's own names (FORMATS §4 style) for each override field, used in `input.overrides`. */
const RESULT_NAMES: Record<keyof MetadataOverride, string> = {
  experimentKind: 'experiment_kind',
  startTime: 'start_time',
  title: 'title',
  target: 'target',
  ionizationEnergyEv: 'ionization_energy_ev',
  wavelengthNm: 'wavelength_nm',
  ellipticity: 'ellipticity',
  helicity: 'helicity',
  majorAxisAngleDeg: 'major_axis_angle_deg',
  fieldRatio: 'field_ratio',
  pulseDurationFs: 'pulse_duration_fs',
};

/** An override as the result records it (`input.overrides`): result names, values as given. */
export function overrideProvenance(override: MetadataOverride): Record<string, string | number> {
  const out: Record<string, string | number> = {};
  for (const [field, value] of Object.entries(override) as [keyof MetadataOverride, unknown][]) {
    if (value === undefined || !RESULT_NAMES[field]) continue;
    out[RESULT_NAMES[field]] = value as string | number;
  }
  return out;
}
