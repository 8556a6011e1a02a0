/**
 * Request bodies of the ingest API (zod), shared by the route handlers (which parse) and the shift page (which
 * builds them). Objects are strict: an unknown field such as an object key chosen by the browser is refused.
 */
import { z } from 'zod';
import { MAX_FILE_BYTES, MAX_PART_URLS_PER_REQUEST, MAX_PARTS } from './plan';

const id = z.coerce.number().int().positive();
export const sha256HexSchema = z
  .string()
  .regex(/^[0-9a-f]{64}$/, 'must be 64 lower-case hexadecimal digits (a SHA-256 checksum)');

export const idParams = z.object({ id });
export const shiftParams = z.object({ shiftId: id });
export const uploadParams = z.object({ uploadId: id });

/** What the browser's pre-check found (kept with the upload; the server validates again on its own). */
export const precheckSchema = z.strictObject({
  ok: z.boolean(),
  problems: z.array(z.string().max(2000)).max(200),
  warnings: z.array(z.string().max(2000)).max(200),
  summary: z
    .strictObject({
      experimentKind: z.string().max(40).nullable(),
      target: z.string().max(64).nullable(),
      wavelengthNm: z.number().nullable(),
      ellipticity: z.number().nullable(),
      stepQuantity: z.string().max(40).nullable(),
      nSteps: z.number().int().nullable(),
      nY: z.number().int().nullable(),
      nX: z.number().int().nullable(),
      startTime: z.string().max(64).nullable(),
    })
    .nullable(),
});
export type Precheck = z.infer<typeof precheckSchema>;

export const startUploadBody = z.strictObject({
  shiftId: z.number().int().positive(),
  fileName: z
    .string()
    .trim()
    .min(1, 'must not be empty')
    .max(255, 'must be at most 255 characters')
    .refine((s) => ![...s].some((ch) => ch.charCodeAt(0) < 0x20), 'must not contain control characters'),
  sizeBytes: z
    .number()
    .int('must be a whole number of bytes')
    .min(1, 'must be at least 1 byte (the file is empty)')
    .max(MAX_FILE_BYTES, 'must be at most 5 TiB'),
  lastModifiedMs: z.number().int().nonnegative(),
  precheck: precheckSchema.nullable().optional(),
  /** A quarantined raw file this upload replaces (same team). */
  replacesRawFileId: z.number().int().positive().optional(),
});
export type StartUploadBody = z.infer<typeof startUploadBody>;

export const partsBody = z.strictObject({
  partNumbers: z
    .array(z.number().int().min(1).max(MAX_PARTS))
    .min(1, 'must list at least one part')
    .max(MAX_PART_URLS_PER_REQUEST, `must list at most ${MAX_PART_URLS_PER_REQUEST} parts`),
});

export const completeBody = z.strictObject({
  /** SHA-256 the browser computed while reading the file (optional: the server hashes the stored object anyway). */
  sha256: sha256HexSchema.optional(),
});

export const closeShiftBody = z
  .strictObject({
    /** Close even though some uploads never finished (they are aborted and listed in the receipt). */
    abandonUnfinished: z.boolean().optional(),
  })
  .default({});

const volts = z.number().min(-20_000, 'must be within ±20 kV').max(20_000, 'must be within ±20 kV');

export const logEntryBody = z.strictObject({
  text: z.string().trim().min(1, 'must not be empty').max(5000, 'must be at most 5000 characters'),
  notedAt: z.iso.datetime({ offset: true }).optional(),
  target: z.string().trim().min(1).max(32).optional(),
  wavelengthNm: z.number().positive('must be positive').max(100_000).optional(),
  pulseEnergyUj: z.number().nonnegative('must not be negative').max(1e7).optional(),
  ellipticity: z.number().min(0, 'must be from 0 to 1').max(1, 'must be from 0 to 1').optional(),
  detectorVoltages: z
    .strictObject({
      mcpFrontV: volts.optional(),
      mcpBackV: volts.optional(),
      phosphorV: volts.optional(),
      repellerV: volts.optional(),
    })
    .optional(),
});
export type LogEntryBody = z.infer<typeof logEntryBody>;

/**
 * Corrected metadata an analyst supplies when releasing a quarantined file. Each field replaces the value at its
 * path of FORMATS §1 (the stored bytes are never changed; the override is recorded with the raw file).
 */
export const metadataOverrideSchema = z
  .strictObject({
    experimentKind: z.enum(['angular_streaking', 'bicircular', 'two_color_phase', 'image']).optional(),
    startTime: z.iso.datetime({ offset: true }).optional(),
    title: z.string().max(255).optional(),
    target: z.string().trim().min(1).max(32).optional(),
    ionizationEnergyEv: z.number().positive().max(1000).optional(),
    wavelengthNm: z.number().positive().max(100_000).optional(),
    ellipticity: z.number().min(0).max(1).optional(),
    helicity: z.union([z.literal(1), z.literal(-1)]).optional(),
    majorAxisAngleDeg: z.number().min(-360).max(360).optional(),
    fieldRatio: z.number().nonnegative().max(100).optional(),
    pulseDurationFs: z.number().positive().max(1e6).optional(),
  })
  .refine((o) => Object.keys(o).length > 0, 'must correct at least one field');
export type MetadataOverride = z.infer<typeof metadataOverrideSchema>;

export const releaseBody = z.discriminatedUnion('mode', [
  z.strictObject({
    mode: z.literal('revalidate'),
    metadataOverride: metadataOverrideSchema,
    note: z.string().max(2000).optional(),
  }),
  z.strictObject({
    mode: z.literal('accept'),
    reason: z.string().trim().min(10, 'must say in a sentence why the file is fit for use').max(2000),
  }),
]);
export type ReleaseBody = z.infer<typeof releaseBody>;
