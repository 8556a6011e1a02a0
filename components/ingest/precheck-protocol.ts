// Messages between the shift page and its pre-check worker (precheck.worker.ts).

export interface PrecheckSummary {
  experimentKind: string | null;
  target: string | null;
  wavelengthNm: number | null;
  ellipticity: number | null;
  stepQuantity: string | null;
  stepUnits: string | null;
  stepValues: number[];
  nSteps: number | null;
  nY: number | null;
  nX: number | null;
  startTime: string | null;
  countsDtype: string | null;
  /** Event files (FORMATS §1.1): the event count, events per step and the file's spectrometer values. */
  events?: PrecheckEvents | null;
}

export interface PrecheckEvents {
  count: number;
  /** Events of each step (first 4096 steps). */
  perStep: number[];
  spectrometer: {
    acceleration_length_m: number;
    drift_length_m: number;
    electric_field_v_per_m: number;
    magnetic_field_t: number;
    t0_ns: number;
    detector_center_mm: [number, number];
  };
  /** Events the preview histogram was made of (the first ones of step 0). */
  previewEvents: number;
}

export interface PrecheckPreview {
  /** Downsampled first frame (row-major, `width` × `height`), y upward when drawn; for an event file the first
   * events of step 0 histogrammed on the default momentum grid. */
  pixels: Float32Array;
  width: number;
  height: number;
  /** Sum of all counts of the first frame. */
  totalCounts: number;
  max: number;
}

export interface PrecheckResult {
  ok: boolean;
  problems: string[];
  warnings: string[];
  summary: PrecheckSummary | null;
  preview: PrecheckPreview | null;
  /** How the worker read the file: lazily (WORKERFS, only what the reader asks for) or whole (copied into memory). */
  access: 'lazy' | 'whole';
  ms: number;
}

export type WorkerRequest = { op: 'precheck'; id: number; file: File } | { op: 'hash'; id: number; file: File };

export type WorkerReply =
  | { op: 'precheck'; id: number; result: PrecheckResult }
  | { op: 'hash-progress'; id: number; bytes: number }
  | { op: 'hash'; id: number; sha256: string }
  | { op: 'error'; id: number; message: string };
