/**
 * The HDF5 file signature and superblock check, done on raw bytes before a file is handed to h5wasm (which gives
 * only a generic error for a non-HDF5 or truncated file).
 *
 * Source: The HDF Group, "HDF5 File Format Specification Version 3.0", §II.A "Disk Format: Level 0A — Format
 * Signature and Superblock": the signature `\x89HDF\r\n\x1a\n` sits at byte 0, 512, 1024, 2048, … (0 or a power
 * of two ≥ 512); the superblock (versions 0–3) records the end-of-file address, and a file shorter than that
 * is truncated (the HDF5 library applies the same test when it opens a file).
 */

// VARIABLES //

/** The 8-byte HDF5 format signature. */
export const HDF5_SIGNATURE = Uint8Array.of(0x89, 0x48, 0x44, 0x46, 0x0d, 0x0a, 0x1a, 0x0a);

/** Bytes needed after the signature to read the superblock fields we check (v0/v1 with 8-byte offsets). */
export const SUPERBLOCK_PROBE_BYTES = 96;

// TYPES //

/** Reads `length` bytes at `position`; may return fewer at the end of the file. */
export type ByteReader = (position: number, length: number) => Uint8Array;

export interface SignatureCheck {
  ok: boolean;
  /** Byte offset of the signature, or null. */
  offset: number | null;
  /** Superblock version (0–3) when found. */
  superblockVersion: number | null;
  /** Bytes the superblock says the file has (base + eof), or null if it could not be read. */
  expectedSize: number | null;
  /** A sentence for an operator when !ok. */
  problem: string | null;
}

// FUNCTIONS //

/**
 * Looks for the HDF5 signature and checks the superblock's end-of-file address against the file size.
 *
 * @param read - byte reader
 * @param size - file size in bytes
 * @returns the check; `problem` names what is wrong
 */
export function checkHdf5Signature(read: ByteReader, size: number): SignatureCheck {
  const fail = (problem: string): SignatureCheck => ({
    ok: false,
    offset: null,
    superblockVersion: null,
    expectedSize: null,
    problem,
  });
  if (size === 0) return fail('the file is empty (0 bytes)');
  let offset: number | null = null;
  for (let at = 0; at + 8 <= size; at = at === 0 ? 512 : at * 2) {
    const head = read(at, 8);
    if (head.length === 8 && HDF5_SIGNATURE.every((b, i) => head[i] === b)) {
      offset = at;
      break;
    }
  }
  if (offset === null) {
    const kind = guessFileKind(read(0, 16));
    return fail(
      `not an HDF5 file: the 8-byte HDF5 signature was not found at byte 0, 512, 1024, … ${kind ? `(the file looks like ${kind})` : ''}`.trim(),
    );
  }
  // Never look past the end of the file, whatever the reader returns there.
  const sb = read(offset + 8, SUPERBLOCK_PROBE_BYTES).subarray(0, Math.max(0, size - offset - 8));
  const version = sb[0];
  if (version === undefined) return fail('truncated HDF5 file: it ends right after the signature');
  const parsed = parseSuperblockEof(sb, offset);
  if (parsed === 'short') {
    return { ...fail(`truncated HDF5 file: it ends inside the superblock (${size} bytes)`), offset };
  }
  if (parsed === 'unknown') {
    return {
      ...fail(`unsupported HDF5 superblock version ${version} (Lobeline reads versions 0–3, HDF5 1.8 and later)`),
      offset,
    };
  }
  const expectedSize = parsed;
  if (expectedSize !== null && expectedSize > size) {
    const pct = ((100 * size) / expectedSize).toFixed(1);
    return {
      ok: false,
      offset,
      superblockVersion: version,
      expectedSize,
      problem: `truncated HDF5 file: the superblock records ${expectedSize} bytes but the file has ${size} (${pct} %); the upload or copy was probably interrupted`,
    };
  }
  return { ok: true, offset, superblockVersion: version, expectedSize, problem: null };
}

/**
 * Reads base + end-of-file address from the superblock bytes that follow the signature.
 *
 * @returns bytes expected, null when the address is undefined (all ones), 'short' or 'unknown' (version)
 */
function parseSuperblockEof(sb: Uint8Array, signatureOffset: number): number | null | 'short' | 'unknown' {
  const version = sb[0] ?? -1;
  let sizeOfOffsets: number;
  let baseAt: number;
  if ((version === 0 || version === 1) && sb.length < 8) return 'short';
  if ((version === 2 || version === 3) && sb.length < 4) return 'short';
  if (version === 0 || version === 1) {
    // version, free-space v, root sym v, reserved, shared hdr v, size of offsets, size of lengths, reserved,
    // leaf K (2), internal K (2), flags (4) [, v1: indexed storage K (2), reserved (2)], then addresses.
    sizeOfOffsets = sb[5] ?? 0;
    baseAt = version === 0 ? 16 : 20;
  } else if (version === 2 || version === 3) {
    // version, size of offsets, size of lengths, flags, then base, extension, eof, root addresses.
    sizeOfOffsets = sb[1] ?? 0;
    baseAt = 4;
  } else {
    return 'unknown';
  }
  if (![2, 4, 8].includes(sizeOfOffsets)) return 'unknown';
  // base address, then (v0/1) free-space address, eof; (v2/3) extension address, eof.
  const eofAt = baseAt + 2 * sizeOfOffsets;
  if (sb.length < eofAt + sizeOfOffsets) return 'short';
  const eof = readAddress(sb, eofAt, sizeOfOffsets);
  if (eof === null) return null;
  // The HDF5 library itself refuses a file whose size is below the stored end-of-file address (H5F__super_read
  // compares eof + base_addr with stored_eof, its driver eof being relative to the base), so the stored value is
  // the file size; checked on a file with a 512-byte user block written by h5py.
  void signatureOffset;
  return eof;
}

/** Little-endian unsigned address of `n` bytes; null for the "undefined address" (all bits set). */
function readAddress(b: Uint8Array, at: number, n: number): number | null {
  let allOnes = true;
  let v = 0;
  for (let i = n - 1; i >= 0; i--) {
    const byte = b[at + i] ?? 0;
    if (byte !== 0xff) allOnes = false;
    v = v * 256 + byte;
  }
  return allOnes ? null : v;
}

/** A few common file kinds, so that "not HDF5" can say what it is instead. */
function guessFileKind(head: Uint8Array): string | null {
  const ascii = String.fromCharCode(...head.slice(0, 8));
  if (head[0] === 0x89 && ascii.slice(1, 4) === 'PNG') return 'a PNG image';
  if (ascii.startsWith('PK')) return 'a ZIP archive';
  if (ascii.startsWith('%PDF')) return 'a PDF document';
  if (head[0] === 0x1f && head[1] === 0x8b) return 'a gzip-compressed file (decompress it first)';
  if (ascii.startsWith('CDF')) return 'a classic NetCDF file';
  if (ascii.startsWith('II*') || ascii.startsWith('MM\0*')) return 'a TIFF image';
  if (ascii.startsWith('SIMPLE')) return 'a FITS file';
  if (head.length > 0 && head.every((b) => b === 9 || b === 10 || b === 13 || (b >= 32 && b < 127))) {
    return 'a text file';
  }
  return null;
}
