// Typed application errors. A code is `${ErrorType}:${Surface}`, e.g. `not_found:scan` or `unavailable:storage`.
// The type decides the HTTP status; the surface decides what the user may see: failures of the infrastructure
// surfaces (database, storage, queue, mail) show a generic sentence and their internals go only to the log.
import { log } from './log';

export const ERROR_TYPES = [
  'bad_request',
  'unauthorized',
  'forbidden',
  'not_found',
  'conflict',
  'too_large',
  'unsupported_media',
  'rate_limited',
  'unavailable',
  'internal',
] as const;
export type ErrorType = (typeof ERROR_TYPES)[number];

export const SURFACES = [
  'auth',
  'database',
  'storage',
  'queue',
  'mail',
  'api',
  'upload',
  'scan',
  'campaign',
  'shift',
  'calibration',
  'settings',
  'reduction',
  'comparison',
  'model',
  'archive',
  'fixity',
  'audit',
  'export',
  'team',
  'user',
  'invitation',
  'notification',
  'admin',
  'config',
] as const;
export type Surface = (typeof SURFACES)[number];

export type ErrorCode = `${ErrorType}:${Surface}`;
export type Visibility = 'response' | 'log';

export const STATUS_BY_TYPE: Record<ErrorType, number> = {
  bad_request: 400,
  unauthorized: 401,
  forbidden: 403,
  not_found: 404,
  conflict: 409,
  too_large: 413,
  unsupported_media: 415,
  rate_limited: 429,
  unavailable: 503,
  internal: 500,
};

/** Infrastructure surfaces: the user gets a generic sentence, the details go to the log only. */
export const VISIBILITY_BY_SURFACE: Record<Surface, Visibility> = Object.fromEntries(
  SURFACES.map((s) => [s, s === 'database' || s === 'storage' || s === 'queue' || s === 'mail' ? 'log' : 'response']),
) as Record<Surface, Visibility>;

const FALLBACK_BY_TYPE: Record<ErrorType, string> = {
  bad_request: 'The request could not be processed. Check the highlighted values and try again.',
  unauthorized: 'Please sign in to continue.',
  forbidden: 'You do not have access to this.',
  not_found: 'We could not find what you were looking for.',
  conflict: 'This conflicts with something that already exists or has changed meanwhile.',
  too_large: 'The request is larger than this address accepts.',
  unsupported_media: 'Send this request as JSON (Content-Type: application/json).',
  rate_limited: 'Too many attempts. Please wait a moment and try again.',
  unavailable: 'A service Lobeline depends on is not answering right now. Please try again in a minute.',
  internal: 'Something went wrong on our side. The details were logged.',
};

const MESSAGES: Partial<Record<ErrorCode, string>> = {
  'unauthorized:auth': 'Please sign in to continue.',
  'bad_request:auth': 'The e-mail address or password is not right.',
  'rate_limited:auth': 'Too many failed sign-ins. Please wait a few minutes before trying again.',
  'forbidden:auth': 'Your account does not have the role needed for this.',
  'unavailable:database': 'The database is not answering right now. Nothing was changed; please try again in a minute.',
  'unavailable:storage':
    'The file store is not answering right now. Nothing was changed; please try again in a minute.',
  'not_found:storage': 'The stored file could not be found.',
  'unavailable:queue': 'The job queue is not answering right now. Please try again in a minute.',
  'unavailable:mail': 'The e-mail could not be sent right now. Please try again later.',
  'bad_request:api': 'The request is not valid.',
  'not_found:api': 'There is no such endpoint.',
  'bad_request:upload': 'This upload cannot be accepted.',
  'conflict:upload': 'This file was already uploaded.',
  'not_found:scan': 'There is no such scan, or it belongs to a team you are not a member of.',
  'not_found:campaign': 'There is no such campaign, or it belongs to a team you are not a member of.',
  'not_found:shift': 'There is no such shift, or it belongs to a team you are not a member of.',
  'not_found:calibration': 'There is no such calibration version.',
  'conflict:calibration': 'This calibration was changed by someone else meanwhile. Reload and try again.',
  'forbidden:admin': 'Only administrators may do this.',
  'internal:config': 'The server is not configured correctly. The details were logged.',
};

export interface AppErrorOptions {
  cause?: unknown;
  /** Plain-language list of problems, shown to the user on surfaces that are visible. */
  details?: string[];
  /** Overrides the message from the table (must be safe to show to a user). */
  message?: string;
  /** Extra fields for the log only. */
  context?: Record<string, unknown>;
  /** Seconds for a Retry-After header (rate_limited / unavailable). */
  retryAfterSeconds?: number;
}

export class AppError extends Error {
  readonly code: ErrorCode;
  readonly type: ErrorType;
  readonly surface: Surface;
  readonly details?: string[];
  readonly context?: Record<string, unknown>;
  readonly retryAfterSeconds?: number;
  private readonly customMessage?: string;

  constructor(code: ErrorCode, options: AppErrorOptions = {}) {
    super(options.message ?? messageFor(code), options.cause === undefined ? undefined : { cause: options.cause });
    this.name = 'AppError';
    this.code = code;
    const [type, surface] = code.split(':') as [ErrorType, Surface];
    this.type = type;
    this.surface = surface;
    this.details = options.details;
    this.context = options.context;
    this.retryAfterSeconds = options.retryAfterSeconds;
    this.customMessage = options.message;
  }

  get status(): number {
    return STATUS_BY_TYPE[this.type];
  }

  get visibility(): Visibility {
    return VISIBILITY_BY_SURFACE[this.surface] ?? 'response';
  }

  /** What the user may read: hidden surfaces always get the generic sentence of their code. */
  get userMessage(): string {
    if (this.visibility === 'log') return messageFor(this.code);
    return this.customMessage ?? messageFor(this.code);
  }

  toJSON(): { code: ErrorCode; message: string; details?: string[] } {
    const body: { code: ErrorCode; message: string; details?: string[] } = {
      code: this.code,
      message: this.userMessage,
    };
    if (this.details?.length && this.visibility === 'response') body.details = this.details;
    return body;
  }

  /** A JSON Response `{ error: { code, message, details? } }`; server-side problems are logged here. */
  toResponse(init: { headers?: HeadersInit } = {}): Response {
    if (this.status >= 500) log.error('request failed', { code: this.code, err: this, ...this.context });
    else if (this.visibility === 'log') log.warn('request failed', { code: this.code, err: this, ...this.context });
    const headers = new Headers(init.headers);
    headers.set('content-type', 'application/json; charset=utf-8');
    headers.set('cache-control', 'no-store');
    if (this.retryAfterSeconds !== undefined) headers.set('retry-after', String(Math.ceil(this.retryAfterSeconds)));
    return new Response(JSON.stringify({ error: this.toJSON() }), { status: this.status, headers });
  }
}

export function messageFor(code: ErrorCode): string {
  const type = code.split(':')[0] as ErrorType;
  return MESSAGES[code] ?? FALLBACK_BY_TYPE[type] ?? FALLBACK_BY_TYPE.internal;
}

export function isAppError(err: unknown): err is AppError {
  return err instanceof AppError;
}

export function isErrorCode(value: string): value is ErrorCode {
  const [type, surface, extra] = value.split(':');
  return (
    extra === undefined &&
    (ERROR_TYPES as readonly string[]).includes(type ?? '') &&
    (SURFACES as readonly string[]).includes(surface ?? '')
  );
}

/** Wraps anything thrown into an AppError (unknown errors become `fallback`, default internal:api). */
export function toAppError(err: unknown, fallback: ErrorCode = 'internal:api'): AppError {
  if (err instanceof AppError) return err;
  return new AppError(fallback, { cause: err });
}

/** For route handlers: `catch (err) { return errorResponse(err); }` */
export function errorResponse(err: unknown, fallback: ErrorCode = 'internal:api'): Response {
  return toAppError(err, fallback).toResponse();
}
