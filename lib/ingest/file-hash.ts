/**
 * The browser's SHA-256 of a dropped file, fed chunk by chunk: WebAssembly from hash-wasm (an npm package, MIT)
 * where the page may compile WebAssembly (the content security policy allows 'wasm-unsafe-eval'), else the
 * pure-TypeScript FIPS 180-4 implementation of sha256.ts. Both are checked against node:crypto and the FIPS 180-2
 * appendix examples in tests/unit/ingest/file-hash.test.ts. Runs in a web worker, in Node and in tests.
 */
import { createSHA256 } from 'hash-wasm';
import { Sha256 } from './sha256';

// TYPES //

export interface ChunkHasher {
  /** Which implementation hashes (shown nowhere; for benchmarks and tests). */
  readonly engine: 'wasm' | 'js';
  update(data: Uint8Array): void;
  /** The hash as 64 lower-case hex digits; call once, after the last update. */
  hex(): string;
}

// FUNCTIONS //

/** A pure-TypeScript hasher (no WebAssembly). */
export function createJsHasher(): ChunkHasher {
  const h = new Sha256();
  return {
    engine: 'js',
    update: (data) => void h.update(data),
    hex: () => h.hex(),
  };
}

/**
 * The fastest hasher this context allows.
 *
 * @param prefer - 'js' forces the pure-TypeScript one (benchmarks)
 */
export async function createChunkHasher(prefer: 'wasm' | 'js' = 'wasm'): Promise<ChunkHasher> {
  if (prefer === 'wasm' && typeof WebAssembly !== 'undefined') {
    try {
      const h = await createSHA256();
      h.init();
      return {
        engine: 'wasm',
        update: (data) => void h.update(data),
        hex: () => h.digest('hex'),
      };
    } catch {
      // WebAssembly refused (an older policy without 'wasm-unsafe-eval'): hash in TypeScript instead
    }
  }
  return createJsHasher();
}
