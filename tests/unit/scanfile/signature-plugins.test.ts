/**
 * Byte-level checks before h5wasm sees a file, reading from a byte buffer, and compression filters.
 * Sources: HDF5 File Format Specification v3.0 §II.A (signature `\x89HDF\r\n\x1a\n` at 0, 512, 1024, …; the
 * superblock's end-of-file address); the registered HDF5 filter ids (LZF 32000, LZ4 32004, bitshuffle 32008,
 * bzip2 307) of The HDF Group; h5py's built-in LZF filter writes the reference LZF file.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { openScanBuffer } from '@/reduction/hdf5/node';
import { openScanFile } from '@/reduction/hdf5/reader';
import type { H5Runtime } from '@/reduction/hdf5/runtime';
import { checkHdf5Signature, HDF5_SIGNATURE } from '@/reduction/hdf5/signature';
import { planScan } from '@/reduction/synth/model';
import { writeSynthScan } from '@/reduction/synth/scan-file';
import { generatedDir, H5PY_DIR, runtime } from './helpers';

let rt: H5Runtime;
beforeAll(async () => {
  rt = await runtime();
});

const reader = (b: Uint8Array) => (pos: number, len: number) => b.subarray(pos, Math.min(b.length, pos + len));

describe('checkHdf5Signature', () => {
  it('finds the signature at 0 and at 512 and reads the end-of-file address (h5py files)', () => {
    for (const [name, at] of [
      ['as_uint16_plain_fixed.h5', 0],
      ['pp_float32_gzip.h5', 0],
      ['as_float64_plain_userblock.h5', 512],
    ] as const) {
      const b = new Uint8Array(readFileSync(path.join(H5PY_DIR, name)));
      const r = checkHdf5Signature(reader(b), b.length);
      expect(r.ok, name).toBe(true);
      expect(r.offset).toBe(at);
      expect(r.expectedSize).toBe(b.length); // h5py writes eof = file size
    }
  });

  it('reads superblock version 0 (libver earliest) and 3 (libver v110)', () => {
    const v0 = new Uint8Array(readFileSync(path.join(H5PY_DIR, 'as_uint16_plain_fixed.h5')));
    const v3 = new Uint8Array(readFileSync(path.join(H5PY_DIR, 'pp_float32_gzip.h5')));
    expect(checkHdf5Signature(reader(v0), v0.length).superblockVersion).toBe(0);
    expect(checkHdf5Signature(reader(v3), v3.length).superblockVersion).toBe(3);
  });

  it('refuses an empty file, a text file, a PNG and a file cut inside the superblock', () => {
    expect(checkHdf5Signature(reader(new Uint8Array(0)), 0).problem).toBe('the file is empty (0 bytes)');
    const text = new TextEncoder().encode('step,counts\n0,12\n');
    expect(checkHdf5Signature(reader(text), text.length).problem).toContain('looks like a text file');
    const png = Uint8Array.of(0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13);
    expect(checkHdf5Signature(reader(png), png.length).problem).toContain('a PNG image');
    const cut = new Uint8Array([...HDF5_SIGNATURE, 0, 0, 0]);
    expect(checkHdf5Signature(reader(cut), cut.length).problem).toContain('ends inside the superblock');
  });

  it('reports how much of a truncated file is there', () => {
    const b = new Uint8Array(readFileSync(path.join(H5PY_DIR, 'pp_float32_gzip.h5')));
    const half = b.subarray(0, 5000);
    const r = checkHdf5Signature(reader(half), half.length);
    expect(r.ok).toBe(false);
    expect(r.problem).toBe(
      `truncated HDF5 file: the superblock records ${b.length} bytes but the file has 5000 (${(500000 / b.length).toFixed(1)} %); the upload or copy was probably interrupted`,
    );
  });
});

describe('reading from a byte buffer', () => {
  it('gives the same metadata and frames as reading the path, and removes its scratch copy', async () => {
    const file = path.join(H5PY_DIR, 'bc_uint32_gzip_fletcher.h5');
    const a = openScanFile(rt, file);
    const b = await openScanBuffer(new Uint8Array(readFileSync(file)));
    if (!a.ok || !b.ok) throw new Error('refused');
    expect(b.scan.meta).toEqual(a.scan.meta);
    expect(Array.from(b.scan.readFrame(2))).toEqual(Array.from(a.scan.readFrame(2)));
    a.scan.close();
    b.scan.close();
  });

  it('refuses garbage bytes with the signature message', async () => {
    const r = await openScanBuffer(new TextEncoder().encode('not a scan'));
    expect(r.ok ? '' : r.problems[0]?.message).toContain('(file): not an HDF5 file');
  });
});

describe('compression filters', () => {
  it('the runtime found the LZ4, bitshuffle, LZF and bzip2 plugins of h5wasm-plugins', () => {
    expect(rt.pluginFilterIds).toEqual([307, 32000, 32004, 32008]);
  });

  it('reads an LZF file written by h5py bit-exactly with the plugin (as fixtures.json)', () => {
    const fx = JSON.parse(readFileSync(path.join(H5PY_DIR, 'fixtures.json'), 'utf8'));
    const want = fx.files['as_uint16_lzf.h5'].frames as number[][][];
    const r = openScanFile(rt, path.join(H5PY_DIR, 'as_uint16_lzf.h5'));
    if (!r.ok) throw new Error(r.problems[0]?.message);
    expect(r.scan.meta.countsFilters).toEqual(['LZF']);
    want.forEach((f, k) => {
      expect(Array.from(r.scan.readFrame(k))).toEqual(f.flat());
    });
    r.scan.close();
  });

  it('says "unsupported compression" when the plugins are not loaded (instead of returning garbage)', () => {
    const r = openScanFile(rt, path.join(H5PY_DIR, 'as_uint16_lzf.h5'), { acceptedPluginFilters: [] });
    expect(r.ok).toBe(false);
    if (!r.ok) {
      expect(r.problems.map((p) => p.message)).toEqual([
        '/entry/data/counts: unsupported compression: LZF (HDF5 filter 32000); Lobeline reads gzip/deflate, shuffle, fletcher32; load the h5wasm-plugins compression plugins to read it',
      ]);
    }
  });

  it('an LZ4-compressed scan (written through the plugin) reads back equal to the gzip one of the same seed', () => {
    const dir = generatedDir('scanfile-lz4');
    const plan = planScan({ kind: 'angular_streaking', size: 64, steps: 2, counts: 2e4, seed: 7 });
    writeSynthScan(rt, path.join(dir, 'gzip.h5'), plan, null);
    writeSynthScan(rt, path.join(dir, 'lz4.h5'), plan, 'lz4_compressed');
    const g = openScanFile(rt, path.join(dir, 'gzip.h5'));
    const l = openScanFile(rt, path.join(dir, 'lz4.h5'));
    if (!g.ok || !l.ok) throw new Error('refused');
    expect(l.scan.meta.countsFilters).toEqual(['LZ4']);
    for (let k = 0; k < 2; k++) expect(Array.from(l.scan.readFrame(k))).toEqual(Array.from(g.scan.readFrame(k)));
    g.scan.close();
    l.scan.close();
    const refusedLz4 = openScanFile(rt, path.join(dir, 'lz4.h5'), { acceptedPluginFilters: [] });
    expect(refusedLz4.ok ? '' : refusedLz4.problems[0]?.message).toContain(
      'unsupported compression: LZ4 (HDF5 filter 32004)',
    );
  });

  it('h5py (without plugins) cannot read the LZ4 file either: the filter really is LZ4, not gzip', async () => {
    const { python } = await import('./helpers');
    const dir = generatedDir('scanfile-lz4');
    const r = python<{ filters: Record<string, unknown>; error: string }>(
      `import h5py, json, sys
f = h5py.File(sys.argv[1], 'r'); d = f['/entry/data/counts']
try:
    d[0]; err = ''
except Exception as e:
    err = str(e)
print(json.dumps({'filters': {str(k): list(v) if v else v for k, v in d._filters.items()}, 'error': err}))`,
      [path.join(dir, 'lz4.h5')],
    );
    expect(Object.keys(r.filters)).toEqual(['32004']);
    expect(r.error).toContain("Can't read data");
  });
});

describe('the HDF5 library is never handed a broken file', () => {
  it('a truncated copy of a generated scan is refused by the byte check', () => {
    const dir = generatedDir('scanfile-trunc');
    const file = path.join(dir, 'cut.h5');
    writeSynthScan(rt, file, planScan({ kind: 'image', size: 64, counts: 1e4 }), null);
    const b = readFileSync(file);
    writeFileSync(file, b.subarray(0, b.length - 100));
    const r = openScanFile(rt, file);
    expect(r.ok ? '' : r.problems[0]?.message).toContain(
      `the superblock records ${b.length} bytes but the file has ${b.length - 100}`,
    );
  });
});
