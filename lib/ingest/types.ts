// DTOs of the ingest feature: what the shift page and the ingest API hand to the browser (plain JSON, no models).
import type { Precheck } from './schemas';

export interface ShiftHeaderDto {
  id: number;
  title: string;
  status: 'open' | 'closed';
  openedAt: string;
  openedBy: string | null;
  closedAt: string | null;
  closedBy: string | null;
  receiptSentAt: string | null;
  team: { id: number; slug: string; name: string };
  campaign: { id: number; name: string; target: string; wavelengthNm: number; experimentKind: string };
}

export type RawFileStatusDto = 'accepted' | 'quarantined' | 'released' | 'replaced';

export interface ShiftFileDto {
  scanId: number;
  rawFileId: number;
  fileName: string;
  sizeBytes: number;
  sha256: string;
  rawStatus: RawFileStatusDto;
  scanStatus: string;
  /** The reader's sentences for a quarantined file. */
  reasons: string[];
  /** What the catalogue shortened (see lib/ingest/catalogue-limits.ts). */
  warnings: string[];
  /** True when this upload was identical to a file already stored (the existing file was linked). */
  duplicateLinked: boolean;
  uploadedAt: string;
  uploadedBy: string | null;
  releasedAt: string | null;
  releaseNote: string | null;
  replacedByRawFileId: number | null;
  replacesRawFileId: number | null;
  summary: {
    experimentKind: string | null;
    target: string | null;
    wavelengthNm: number | null;
    nSteps: number | null;
    nY: number | null;
    nX: number | null;
  };
}

export interface UnfinishedUploadDto {
  uploadId: number;
  fileName: string;
  sizeBytes: number;
  lastModifiedMs: number | null;
  mode: 'single' | 'multipart';
  uploadedBy: string | null;
  startedAt: string;
}

export interface LogEntryDto {
  id: number;
  notedAt: string;
  author: string | null;
  text: string;
  target: string | null;
  wavelengthNm: number | null;
  pulseEnergyUj: number | null;
  ellipticity: number | null;
  detectorVoltages: { mcpFrontV?: number; mcpBackV?: number; phosphorV?: number; repellerV?: number } | null;
}

export interface ShiftPermissionsDto {
  upload: boolean;
  log: boolean;
  close: boolean;
  release: boolean;
}

/** An upload whose stored object is being verified by a worker. */
export interface VerifyingUploadDto {
  uploadId: number;
  fileName: string;
  sizeBytes: number;
}

export interface ShiftViewDto {
  shift: ShiftHeaderDto;
  files: ShiftFileDto[];
  unfinished: UnfinishedUploadDto[];
  verifying: VerifyingUploadDto[];
  log: LogEntryDto[];
  permissions: ShiftPermissionsDto;
}

/** Answer of POST /api/uploads (start or resume). */
export type UploadTicketDto =
  | {
      uploadId: number;
      mode: 'single';
      sizeBytes: number;
      url: string;
      expiresAt: string;
      resumed: boolean;
    }
  | {
      uploadId: number;
      mode: 'multipart';
      sizeBytes: number;
      partSize: number;
      partCount: number;
      /** Parts the store already holds (resume). */
      partsDone: { partNumber: number; size: number }[];
      resumed: boolean;
    };

export interface PartUrlDto {
  partNumber: number;
  url: string;
  size: number;
  expiresAt: string;
}

/** Verdict on a verified upload (POST /api/uploads/[id]/complete, GET /api/uploads/[id]). */
export interface UploadOutcomeDto {
  uploadId: number;
  state: 'done';
  outcome: 'accepted' | 'quarantined' | 'duplicate';
  scanId: number;
  rawFileId: number;
  sha256: string;
  sizeBytes: number;
  reasons: string[];
  /** What the catalogue changed or could not keep (e.g. a title shortened to the column's length). */
  warnings: string[];
  /** Set when the browser's checksum differed from the stored object's (the upload is then refused). */
  message: string;
  /** For a duplicate of a file that is already a scan of this campaign: that scan (the duplicate is not counted). */
  countedAsScanId?: number | null;
}

export type { Precheck };

/** An upload that has no verdict yet (large files are verified by a worker after the completion answered). */
export interface UploadPendingDto {
  uploadId: number;
  state: 'open' | 'verifying' | 'failed' | 'aborted';
  message: string;
}

export type UploadStateDto = UploadOutcomeDto | UploadPendingDto;
