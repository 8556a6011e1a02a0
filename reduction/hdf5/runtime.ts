/**
 * The h5wasm runtime handed to Lobeline's HDF5 code. The module is passed in, never imported here, so the same
 * reader runs in Node (`await import('h5wasm/node')`, real file system) and in a browser worker (`h5wasm` with its
 * in-memory or worker file system).
 *
 * h5wasm 0.10.3 by default prints HDF5's error stack to stderr and returns −1 or a garbage buffer; the runtime
 * switches on its throwing error handler so that every failing HDF5 call raises a JavaScript error we can turn into
 * a sentence (see `summarizeHdf5Error`).
 */
import type * as H5 from 'h5wasm';

// TYPES //

type H5Namespace = typeof H5;

/** What Lobeline needs from an h5wasm module namespace. */
export interface H5Runtime {
  File: H5Namespace['File'];
  Dataset: H5Namespace['Dataset'];
  Group: H5Namespace['Group'];
  Module: H5Namespace['Module'];
  /** HDF5 filter ids decodable through loaded plugins (LZ4, bitshuffle, LZF, bzip2), found in the plugin paths. */
  pluginFilterIds: number[];
}

/** Plugin libraries of `h5wasm-plugins` that Lobeline accepts, by file name → HDF5 filter id. */
export const ACCEPTED_PLUGIN_LIBRARIES: Readonly<Record<string, number>> = Object.freeze({
  'libH5Zlz4.so': 32004,
  'libH5Zbshuf.so': 32008,
  'libH5Zlzf.so': 32000,
  'libH5Zbz2.so': 307,
});

// FUNCTIONS //

/**
 * Waits for an h5wasm namespace and wraps it as a runtime.
 *
 * @param ns - `await import('h5wasm/node')` in Node or `import * as h5wasm from 'h5wasm'` in a browser
 * @returns the runtime, with HDF5's throwing error handler switched on
 */
export async function runtimeFrom(
  ns: Pick<H5Namespace, 'File' | 'Dataset' | 'Group' | 'ready'> & { Module?: H5Namespace['Module'] },
): Promise<H5Runtime> {
  const Module = await ns.ready;
  Module.activate_throwing_error_handler();
  return { File: ns.File, Dataset: ns.Dataset, Group: ns.Group, Module, pluginFilterIds: findPluginFilters(Module) };
}

/**
 * Lists the accepted compression plugins present in the HDF5 plugin search paths of the module's file system.
 *
 * @param Module - the h5wasm module
 * @returns HDF5 filter ids (sorted)
 */
export function findPluginFilters(Module: H5Namespace['Module']): number[] {
  const ids = new Set<number>();
  let paths: string[] = [];
  try {
    paths = Module.get_plugin_search_paths();
  } catch {
    return [];
  }
  for (const dir of paths) {
    let names: string[] = [];
    try {
      names = Module.FS.readdir(dir);
    } catch {
      continue; // a search path that does not exist
    }
    for (const name of names) {
      const id = ACCEPTED_PLUGIN_LIBRARIES[name];
      if (id !== undefined) ids.add(id);
    }
  }
  return [...ids].sort((a, b) => a - b);
}

/**
 * Turns the text of an HDF5 error stack into one short reason: the message of the deepest frame.
 *
 * @param error - what h5wasm threw
 * @returns e.g. `truncated file: eof = 11507, sblock->base_addr = 0, stored_eof = 23014`
 */
export function summarizeHdf5Error(error: unknown): string {
  const text = error instanceof Error ? error.message : String(error);
  const frames = [...text.matchAll(/#\d+: [^\n]* in [\w.]+\(\): ([^\n]+)/g)].map((m) => (m[1] ?? '').trim());
  const last = frames[frames.length - 1];
  if (last) return last;
  const first = text.split('\n')[0]?.trim() ?? '';
  return first.length > 0 ? first.slice(0, 200) : 'unknown HDF5 error';
}
