import { z } from 'zod';

// Client-side fetch for the JSON API (used with TanStack Query). A non-2xx answer is rebuilt into an ApiError from
// the `{ error: { code, message, details } }` body; a network failure becomes `offline:api`.

// In the browser, zod would probe for `new Function` (its faster parser) and the page's Content-Security-Policy,
// which allows no eval, reports each probe as a violation. Lobeline's client-side parsing is small: use the plain
// parser there. (lib/api/client.ts is loaded by the root providers, so this runs before any parse.)
if (typeof window !== 'undefined') z.config({ jitless: true });

export class ApiError extends Error {
  readonly code: string;
  readonly details: string[];
  readonly status: number;

  constructor(code: string, message: string, status: number, details: string[] = []) {
    super(message);
    this.name = 'ApiError';
    this.code = code;
    this.status = status;
    this.details = details;
  }

  get isUnauthorized(): boolean {
    return this.status === 401;
  }

  get isForbidden(): boolean {
    return this.status === 403;
  }
}

const OFFLINE_MESSAGE = 'Lobeline cannot reach the server. Check your connection and try again.';

interface ErrorBody {
  error?: { code?: unknown; message?: unknown; details?: unknown };
}

/**
 * Fetches JSON from the API. A plain object `json` is sent as the JSON body. Throws ApiError on failure.
 */
export async function apiFetch<T>(url: string, init: RequestInit & { json?: unknown } = {}): Promise<T> {
  const { json, headers: initHeaders, ...rest } = init;
  const headers = new Headers(initHeaders);
  headers.set('accept', 'application/json');
  let body = rest.body;
  if (json !== undefined) {
    headers.set('content-type', 'application/json');
    body = JSON.stringify(json);
  }
  let response: Response;
  try {
    response = await fetch(url, { credentials: 'same-origin', ...rest, headers, body });
  } catch (err) {
    if ((err as Error)?.name === 'AbortError') throw err;
    throw new ApiError('offline:api', OFFLINE_MESSAGE, 0);
  }
  if (response.status === 204) return undefined as T;
  let data: unknown = null;
  const text = await response.text();
  if (text) {
    try {
      data = JSON.parse(text);
    } catch {
      data = null;
    }
  }
  if (!response.ok) {
    const e = (data as ErrorBody | null)?.error;
    const code = typeof e?.code === 'string' ? e.code : response.status >= 500 ? 'internal:api' : 'bad_request:api';
    const message =
      typeof e?.message === 'string'
        ? e.message
        : response.status >= 500
          ? 'Something went wrong on our side. Please try again.'
          : 'The request was not accepted.';
    const details = Array.isArray(e?.details) ? e.details.filter((d): d is string => typeof d === 'string') : [];
    throw new ApiError(code, message, response.status, details);
  }
  return data as T;
}

/** Per-field errors from ApiError details of the form `field: message` (for forms). */
export function detailsByField(error: unknown): Record<string, string> {
  if (!(error instanceof ApiError)) return {};
  const out: Record<string, string> = {};
  for (const d of error.details) {
    const i = d.indexOf(': ');
    if (i <= 0) continue;
    const field = d.slice(0, i);
    if (!(field in out)) out[field] = d.slice(i + 2);
  }
  return out;
}
