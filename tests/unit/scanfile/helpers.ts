/**
 * Shared helpers for the scan-file tests: the h5wasm runtime, fixture paths and h5py as the outside reference.
 */
import { spawnSync } from 'node:child_process';
import { mkdirSync } from 'node:fs';
import path from 'node:path';
import { loadH5wasmNode } from '@/reduction/hdf5/node';

export const ROOT = path.resolve(import.meta.dirname, '../../..');
export const H5PY_DIR = path.join(ROOT, 'tests/fixtures/h5py');
export const GENERATED = path.join(ROOT, 'tests/fixtures/generated');

export const runtime = () => loadH5wasmNode();

/** A fresh folder under tests/fixtures/generated (gitignored). */
export function generatedDir(name: string): string {
  const dir = path.join(GENERATED, name);
  mkdirSync(dir, { recursive: true });
  return dir;
}

/**
 * Runs a Python snippet with Debian's h5py/numpy (/usr/bin/python3) and parses the JSON it prints.
 * The snippet gets `sys.argv[1:]` = args.
 */
export function python<T>(code: string, args: string[] = []): T {
  const r = spawnSync('/usr/bin/python3', ['-c', code, ...args], { encoding: 'utf8', maxBuffer: 64 * 1024 * 1024 });
  if (r.status !== 0) throw new Error(`python failed (${r.status}): ${r.stderr}`);
  return JSON.parse(r.stdout) as T;
}
