// The browser's incremental SHA-256 against the FIPS 180-2 appendix B examples and against node:crypto (OpenSSL).
import { createHash, randomBytes } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { Sha256, sha256Hex } from '@/lib/ingest/sha256';

const enc = (s: string) => new TextEncoder().encode(s);

describe('Sha256', () => {
  it('matches the FIPS 180-2 appendix B examples', () => {
    // FIPS PUB 180-2, Appendix B.1, B.2, B.3
    expect(sha256Hex(enc('abc'))).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
    expect(sha256Hex(enc('abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq'))).toBe(
      '248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1',
    );
    const h = new Sha256();
    const chunk = enc('a'.repeat(1000));
    for (let i = 0; i < 1000; i++) h.update(chunk);
    expect(h.hex()).toBe('cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0');
  });

  it('equals node:crypto for every length around the block and padding edges, in any chunking', () => {
    const data = randomBytes(300);
    for (let n = 0; n <= 200; n++) {
      const want = createHash('sha256').update(data.subarray(0, n)).digest('hex');
      expect(sha256Hex(data.subarray(0, n))).toBe(want);
      const h = new Sha256();
      for (let i = 0; i < n; i += 7) h.update(data.subarray(i, Math.min(n, i + 7)));
      expect(h.hex(), `length ${n}`).toBe(want);
    }
  });

  it('refuses update after hex', () => {
    const h = new Sha256();
    h.hex();
    expect(() => h.update(enc('x'))).toThrow(/after hex/);
  });
});
