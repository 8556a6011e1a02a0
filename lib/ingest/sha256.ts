/**
 * Incremental SHA-256 (FIPS 180-4, §6.2) for the browser, where `crypto.subtle.digest` hashes only a whole buffer
 * and a detector file may be larger than the memory we want to hold. Feed it chunks in order with `update`, then
 * call `hex()` once. Pure TypeScript, no imports: runs in a web worker, in Node and in tests.
 *
 * Checked against node:crypto and the FIPS 180-2 appendix examples ("abc", the 448-bit message, a million "a") in
 * tests/unit/ingest/sha256.test.ts.
 */

// VARIABLES //

/** First 32 bits of the fractional parts of the cube roots of the first 64 primes (FIPS 180-4 §4.2.2). */
const K = Uint32Array.of(
  0x428a2f98,
  0x71374491,
  0xb5c0fbcf,
  0xe9b5dba5,
  0x3956c25b,
  0x59f111f1,
  0x923f82a4,
  0xab1c5ed5,
  0xd807aa98,
  0x12835b01,
  0x243185be,
  0x550c7dc3,
  0x72be5d74,
  0x80deb1fe,
  0x9bdc06a7,
  0xc19bf174,
  0xe49b69c1,
  0xefbe4786,
  0x0fc19dc6,
  0x240ca1cc,
  0x2de92c6f,
  0x4a7484aa,
  0x5cb0a9dc,
  0x76f988da,
  0x983e5152,
  0xa831c66d,
  0xb00327c8,
  0xbf597fc7,
  0xc6e00bf3,
  0xd5a79147,
  0x06ca6351,
  0x14292967,
  0x27b70a85,
  0x2e1b2138,
  0x4d2c6dfc,
  0x53380d13,
  0x650a7354,
  0x766a0abb,
  0x81c2c92e,
  0x92722c85,
  0xa2bfe8a1,
  0xa81a664b,
  0xc24b8b70,
  0xc76c51a3,
  0xd192e819,
  0xd6990624,
  0xf40e3585,
  0x106aa070,
  0x19a4c116,
  0x1e376c08,
  0x2748774c,
  0x34b0bcb5,
  0x391c0cb3,
  0x4ed8aa4a,
  0x5b9cca4f,
  0x682e6ff3,
  0x748f82ee,
  0x78a5636f,
  0x84c87814,
  0x8cc70208,
  0x90befffa,
  0xa4506ceb,
  0xbef9a3f7,
  0xc67178f2,
);

/** Initial hash value H(0) (FIPS 180-4 §5.3.3). */
const H0 = Uint32Array.of(
  0x6a09e667,
  0xbb67ae85,
  0x3c6ef372,
  0xa54ff53a,
  0x510e527f,
  0x9b05688c,
  0x1f83d9ab,
  0x5be0cd19,
);

// MAIN //

export class Sha256 {
  private readonly h = new Uint32Array(H0);
  private readonly w = new Uint32Array(64);
  /** Partial block waiting for more bytes. */
  private readonly block = new Uint8Array(64);
  private blockLength = 0;
  /** Message length in bytes (a double holds byte counts exactly up to 2^53, far beyond any file here). */
  private length = 0;
  private finished = false;

  /**
   * Adds bytes to the message.
   *
   * @param data - the next bytes, in order
   * @returns this hasher
   */
  update(data: Uint8Array): this {
    if (this.finished) throw new Error('Sha256: update() after hex()');
    let offset = 0;
    const n = data.length;
    this.length += n;
    if (this.blockLength > 0) {
      const take = Math.min(64 - this.blockLength, n);
      this.block.set(data.subarray(0, take), this.blockLength);
      this.blockLength += take;
      offset = take;
      if (this.blockLength < 64) return this;
      this.compress(this.block, 0);
      this.blockLength = 0;
    }
    for (; offset + 64 <= n; offset += 64) this.compress(data, offset);
    if (offset < n) {
      this.block.set(data.subarray(offset), 0);
      this.blockLength = n - offset;
    }
    return this;
  }

  /** Finishes the hash and returns it as 64 lower-case hex digits. */
  hex(): string {
    if (!this.finished) {
      this.finished = true;
      const bitsHigh = Math.floor(this.length / 0x20000000); // length · 8 / 2^32
      const bitsLow = (this.length * 8) >>> 0;
      const b = this.block;
      b[this.blockLength++] = 0x80;
      if (this.blockLength > 56) {
        b.fill(0, this.blockLength);
        this.compress(b, 0);
        this.blockLength = 0;
      }
      b.fill(0, this.blockLength, 56);
      const v = new DataView(b.buffer, b.byteOffset, 64);
      v.setUint32(56, bitsHigh);
      v.setUint32(60, bitsLow);
      this.compress(b, 0);
    }
    let out = '';
    for (const word of this.h) out += word.toString(16).padStart(8, '0');
    return out;
  }

  /** One 64-byte block at `p` (FIPS 180-4 §6.2.2). */
  private compress(m: Uint8Array, p: number): void {
    const w = this.w;
    for (let i = 0; i < 16; i++) {
      const j = p + 4 * i;
      w[i] = ((m[j]! << 24) | (m[j + 1]! << 16) | (m[j + 2]! << 8) | m[j + 3]!) >>> 0;
    }
    for (let i = 16; i < 64; i++) {
      const x = w[i - 15]!;
      const y = w[i - 2]!;
      const s0 = ((x >>> 7) | (x << 25)) ^ ((x >>> 18) | (x << 14)) ^ (x >>> 3);
      const s1 = ((y >>> 17) | (y << 15)) ^ ((y >>> 19) | (y << 13)) ^ (y >>> 10);
      w[i] = (w[i - 16]! + s0 + w[i - 7]! + s1) >>> 0;
    }
    const h = this.h;
    let a = h[0]!;
    let b = h[1]!;
    let c = h[2]!;
    let d = h[3]!;
    let e = h[4]!;
    let f = h[5]!;
    let g = h[6]!;
    let hh = h[7]!;
    for (let i = 0; i < 64; i++) {
      const S1 = ((e >>> 6) | (e << 26)) ^ ((e >>> 11) | (e << 21)) ^ ((e >>> 25) | (e << 7));
      const ch = (e & f) ^ (~e & g);
      const t1 = (hh + S1 + ch + K[i]! + w[i]!) | 0;
      const S0 = ((a >>> 2) | (a << 30)) ^ ((a >>> 13) | (a << 19)) ^ ((a >>> 22) | (a << 10));
      const maj = (a & b) ^ (a & c) ^ (b & c);
      const t2 = (S0 + maj) | 0;
      hh = g;
      g = f;
      f = e;
      e = (d + t1) | 0;
      d = c;
      c = b;
      b = a;
      a = (t1 + t2) | 0;
    }
    h[0] = (h[0]! + a) >>> 0;
    h[1] = (h[1]! + b) >>> 0;
    h[2] = (h[2]! + c) >>> 0;
    h[3] = (h[3]! + d) >>> 0;
    h[4] = (h[4]! + e) >>> 0;
    h[5] = (h[5]! + f) >>> 0;
    h[6] = (h[6]! + g) >>> 0;
    h[7] = (h[7]! + hh) >>> 0;
  }
}

/** SHA-256 of one buffer as hex (convenience). */
export function sha256Hex(data: Uint8Array): string {
  return new Sha256().update(data).hex();
}
