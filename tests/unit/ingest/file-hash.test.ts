// The browser's file hasher (hash-wasm's WebAssembly SHA-256, and the TypeScript fallback) against the FIPS 180-2
// appendix B examples and against node:crypto (OpenSSL) on the same bytes, in the chunking the browser uses.
import { createHash, randomBytes } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { createChunkHasher, createJsHasher } from '@/lib/ingest/file-hash';

const enc = (s: string) => new TextEncoder().encode(s);

describe.each(['wasm', 'js'] as const)('createChunkHasher(%s)', (prefer) => {
  const make = () => (prefer === 'wasm' ? createChunkHasher('wasm') : Promise.resolve(createJsHasher()));

  it('uses the engine asked for', async () => {
    expect((await make()).engine).toBe(prefer);
  });

  it('matches the FIPS 180-2 appendix B examples', async () => {
    // FIPS PUB 180-2, Appendix B.1 ("abc"), B.2 (448-bit message), B.3 (one million "a")
    const one = await make();
    one.update(enc('abc'));
    expect(one.hex()).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
    const two = await make();
    two.update(enc('abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq'));
    expect(two.hex()).toBe('248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1');
    const million = await make();
    const chunk = enc('a'.repeat(1000));
    for (let i = 0; i < 1000; i++) million.update(chunk);
    expect(million.hex()).toBe('cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0');
  });

  it('equals node:crypto on the same bytes, whole and in uneven chunks (block and padding edges too)', async () => {
    const data = randomBytes(3 * 1024 * 1024 + 37);
    for (const n of [0, 1, 55, 56, 63, 64, 65, 119, 120, 128, 4097, data.length]) {
      const want = createHash('sha256').update(data.subarray(0, n)).digest('hex');
      const whole = await make();
      whole.update(data.subarray(0, n));
      expect(whole.hex(), `length ${n}`).toBe(want);
      const pieces = await make();
      for (let i = 0; i < n; i += 1_000_003) pieces.update(data.subarray(i, Math.min(n, i + 1_000_003)));
      expect(pieces.hex(), `length ${n} in chunks`).toBe(want);
    }
  });

  it('keeps two hashes apart when they run at the same time', async () => {
    const a = randomBytes(5000);
    const b = randomBytes(5000);
    const [ha, hb] = [await make(), await make()];
    for (let i = 0; i < 5000; i += 1000) {
      ha.update(a.subarray(i, i + 1000));
      hb.update(b.subarray(i, i + 1000));
    }
    expect(ha.hex()).toBe(createHash('sha256').update(a).digest('hex'));
    expect(hb.hex()).toBe(createHash('sha256').update(b).digest('hex'));
  });
});
