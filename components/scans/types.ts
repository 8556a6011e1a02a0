// Shapes of the scan API's answers as the browser sees them.
import type { JobDto, ResultSummaryDto, ScanDetailDto } from '@/lib/db/queries/scans';
import type { ImagePayload } from '@/lib/jobs/result-arrays';
import type { LobelineResult } from '@/reduction/formats';

export interface ScanResponse {
  scan: ScanDetailDto['scan'];
  results: ResultSummaryDto[];
  jobs: JobDto[];
  can: { viewResults: boolean; startReduction: boolean; flag: boolean; restore?: boolean };
}

export interface ResultResponse {
  id: number;
  calibrationId: number;
  settingsId: number;
  calibrationVersion: number | null;
  settingsVersion: number | null;
  createdAt: string | null;
  hasResultFile: boolean;
  result: LobelineResult;
}

export type ImageResponse = ImagePayload & { resultId: number };

export interface CurvesResponse {
  resultId: number;
  step: number;
  thetaDeg: number[];
  angular: number[];
  pAu: number[];
  radial: number[];
}

export interface RegionResponse {
  resultId: number;
  cells: number;
  stepQuantity: string;
  stepUnits: string;
  values: number[];
  yields: number[];
}

export function decodeFloat32(b64: string): Float32Array {
  const bin = atob(b64);
  const bytes = new Uint8Array(bin.length);
  for (let i = 0; i < bin.length; i++) bytes[i] = bin.charCodeAt(i);
  return new Float32Array(bytes.buffer);
}
