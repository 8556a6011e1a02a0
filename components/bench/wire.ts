// The raw frame on the wire (GET /api/scans/[scanId]/raw-frame): counts as base64 of little-endian Float32 when
// every value is exactly a float32 (detector counts), else Float64, so the browser gets the server's numbers
// bit for bit. Portable (btoa/atob exist in browsers, web workers and Node ≥ 16).
import type { ScanMetadata } from '@/reduction/formats';
import type { BenchFrame } from './compute';

export interface WireFloats {
  dtype: 'float32' | 'float64';
  base64: string;
}

export interface RawFrameResponse {
  scanId: number;
  sha256: string;
  step: number;
  meta: ScanMetadata;
  counts: WireFloats;
  background: WireFloats | null;
}

function toBase64(bytes: Uint8Array): string {
  let s = '';
  const CHUNK = 0x8000;
  for (let i = 0; i < bytes.length; i += CHUNK) s += String.fromCharCode(...bytes.subarray(i, i + CHUNK));
  return btoa(s);
}

/** Little-endian platforms only (every browser and Node target Lobeline runs on). */
export function encodeFloats(a: Float64Array): WireFloats {
  const f32 = Float32Array.from(a);
  let exact = true;
  for (let i = 0; i < a.length; i++) {
    if (f32[i] !== a[i]) {
      exact = false;
      break;
    }
  }
  const v = exact ? f32 : a;
  return {
    dtype: exact ? 'float32' : 'float64',
    base64: toBase64(new Uint8Array(v.buffer, v.byteOffset, v.byteLength)),
  };
}

export function decodeFloats(w: WireFloats): Float64Array {
  const bin = atob(w.base64);
  const bytes = new Uint8Array(bin.length);
  for (let i = 0; i < bin.length; i++) bytes[i] = bin.charCodeAt(i);
  return w.dtype === 'float32' ? Float64Array.from(new Float32Array(bytes.buffer)) : new Float64Array(bytes.buffer);
}

export function decodeFrame(r: RawFrameResponse): BenchFrame {
  return {
    meta: r.meta,
    step: r.step,
    counts: decodeFloats(r.counts),
    background: r.background ? decodeFloats(r.background) : null,
  };
}
