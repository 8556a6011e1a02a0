/**
 * Node loading of h5wasm (real file system) and of the `h5wasm-plugins` compression plugins (LZ4, bitshuffle,
 * LZF, bzip2). Node-only: the worker and the CLI import this; the reader itself does not.
 */
import { randomBytes } from 'node:crypto';
import { createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { type OpenAnyResult, type OpenEventOptions, openScanOrEvents } from './event-reader';
import { type OpenScanOptions, type OpenScanResult, openScanBytes, openScanFile } from './reader';
import { type H5Runtime, runtimeFrom } from './runtime';

// VARIABLES //

let cached: Promise<H5Runtime> | null = null;

// FUNCTIONS //

/** Directory holding the `libH5Z*.so` plugin files of `h5wasm-plugins`, or null when it is not installed. */
export function pluginDirectory(): string | null {
  try {
    const require = createRequire(import.meta.url);
    const pkg = require.resolve('h5wasm-plugins/package.json');
    return path.join(path.dirname(pkg), 'plugins');
  } catch {
    return null;
  }
}

/**
 * Loads h5wasm for Node once per process, with the compression plugins when available.
 *
 * @param options.plugins - insert the h5wasm-plugins directory into HDF5's plugin search path (default true)
 * @returns the runtime (shared)
 */
export function loadH5wasmNode(options: { plugins?: boolean } = {}): Promise<H5Runtime> {
  if (cached !== null && options.plugins !== false) return cached;
  const p = (async () => {
    const ns = await import('h5wasm/node');
    const Module = await ns.ready;
    if (options.plugins !== false) {
      const dir = pluginDirectory();
      if (dir !== null && !Module.get_plugin_search_paths().includes(dir)) {
        Module.insert_plugin_search_path(dir, 0);
      }
    }
    return runtimeFrom(ns);
  })();
  if (options.plugins !== false) cached = p;
  return p;
}

/** Opens a scan file by path (Node). */
export async function openScanPath(filePath: string, options: OpenScanOptions = {}): Promise<OpenScanResult> {
  const rt = await loadH5wasmNode();
  return openScanFile(rt, path.resolve(filePath), options);
}

/** Opens a scan file from bytes (Node): a temp file is written and removed on close. */
export async function openScanBuffer(bytes: Uint8Array, options: OpenScanOptions = {}): Promise<OpenScanResult> {
  const rt = await loadH5wasmNode();
  const scratch = path.join(tmpdir(), `lobeline-scan-${process.pid}-${randomBytes(6).toString('hex')}.h5`);
  return openScanBytes(rt, bytes, scratch, options);
}

/** Opens an image scan or an event file by path (Node). */
export async function openScanOrEventsPath(
  filePath: string,
  options: OpenScanOptions & OpenEventOptions = {},
): Promise<OpenAnyResult> {
  const rt = await loadH5wasmNode();
  return openScanOrEvents(rt, path.resolve(filePath), options);
}
