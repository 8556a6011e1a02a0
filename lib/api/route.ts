// `apiRoute`: the one wrapper every JSON route handler uses. It parses params, query and body with zod, finds the
// actor, runs the handler and turns errors into `{ error: { code, message, details? } }` responses.
//
//   export const GET = apiRoute({ params: z.object({ campaignId: idParam }) }, async ({ actor, params }) => {
//     const campaign = await getCampaign(...);   // 404 when missing
//     authorize(actor, 'campaign.view', { teamId: campaign.teamId });
//     return { campaign };
//   });
//
// Access is decided inside the handler through lib/policy.ts; a `forbidden:*` refusal is audited here, and so is
// the 404 that answers an id of a team the caller may not see (context.hiddenRefusal, see authorizeObject).
//
// Cross-site request forgery (OWASP ASVS 4.0 V4.2.2 and V13.2.3; RFC 6454 for the Origin header): every
// POST/PUT/PATCH/DELETE here must come from the app's own origin (APP_ORIGIN), judged by Origin, else by
// Sec-Fetch-Site, else by the Referer's origin; a request with none of the three is not from a browser page and
// passes. A body is accepted only as application/json (a cross-site HTML form can only send form encodings or
// text/plain) and only up to the route's size limit (413 otherwise; ASVS V13.1.3 / V12.1.1). next-auth's own
// routes (app/api/auth/[...nextauth]) do not use this wrapper and keep next-auth's CSRF token.
import { z } from 'zod';
import { recordAudit } from '@/lib/audit';
import { getActor } from '@/lib/auth/actor';
import { ipFromHeaders } from '@/lib/auth/sign-in';
import { getEnv } from '@/lib/env';
import { AppError, toAppError } from '@/lib/errors';
import { log } from '@/lib/log';
import type { Actor } from '@/lib/policy';

// TYPES //

type Schema = z.ZodType;
type Out<S> = S extends z.ZodType ? z.output<S> : undefined;

export interface RouteSpec<P extends Schema | undefined, Q extends Schema | undefined, B extends Schema | undefined> {
  params?: P;
  query?: Q;
  body?: B;
  /** Default true: without a signed-in actor the handler is not called and the answer is 401. */
  auth?: boolean;
  /** Largest accepted request body in bytes (default DEFAULT_MAX_BODY_BYTES); a larger one answers 413. */
  maxBodyBytes?: number;
}

/** Body limit of a JSON route unless it says otherwise: 64 KiB is ample for every form Lobeline has. */
export const DEFAULT_MAX_BODY_BYTES = 64 * 1024;

const STATE_CHANGING = new Set(['POST', 'PUT', 'PATCH', 'DELETE']);

export interface RouteContext<P, Q, B, A> {
  actor: A;
  params: P;
  query: Q;
  body: B;
  request: Request;
  /** Client address (see ipFromHeaders in lib/auth/sign-in.ts), for the audit trail. */
  ip: string;
}

/** What Next passes as the second argument of a route handler. */
export interface NextRouteContext {
  params: Promise<Record<string, string | string[] | undefined>>;
}

export type RouteHandler = (request: Request, context?: NextRouteContext) => Promise<Response>;

type HandlerResult = Response | object | null | undefined;

// SCHEMA HELPERS //

/** A positive integer id from a path segment or query parameter ("12" → 12). */
export const idParam = z.coerce
  .number({ error: 'must be a number' })
  .int('must be a whole number')
  .positive('must be a positive number');

// MAIN //

export function apiRoute<
  P extends Schema | undefined = undefined,
  Q extends Schema | undefined = undefined,
  B extends Schema | undefined = undefined,
>(
  spec: RouteSpec<P, Q, B> & { auth: false },
  handler: (ctx: RouteContext<Out<P>, Out<Q>, Out<B>, Actor | null>) => Promise<HandlerResult> | HandlerResult,
): RouteHandler;
export function apiRoute<
  P extends Schema | undefined = undefined,
  Q extends Schema | undefined = undefined,
  B extends Schema | undefined = undefined,
>(
  spec: RouteSpec<P, Q, B> & { auth?: true },
  handler: (ctx: RouteContext<Out<P>, Out<Q>, Out<B>, Actor>) => Promise<HandlerResult> | HandlerResult,
): RouteHandler;
export function apiRoute(
  spec: RouteSpec<Schema | undefined, Schema | undefined, Schema | undefined>,
  typedHandler: (ctx: never) => Promise<HandlerResult> | HandlerResult,
): RouteHandler {
  // The overloads guarantee `actor` is non-null whenever the handler was declared to need it.
  const handler = typedHandler as (
    ctx: RouteContext<unknown, unknown, unknown, Actor | null>,
  ) => Promise<HandlerResult> | HandlerResult;
  return async (request, context) => {
    const ip = ipFromHeaders(request.headers);
    let actor: Actor | null = null;
    try {
      if (STATE_CHANGING.has(request.method.toUpperCase())) assertSameOrigin(request);
      const rawParams = context?.params ? await context.params : {};
      const params = spec.params ? parseOrThrow(spec.params, rawParams, 'path') : undefined;
      const url = new URL(request.url);
      const query = spec.query ? parseOrThrow(spec.query, searchParamsToObject(url.searchParams), 'query') : undefined;
      // Authentication comes before the body is read, so a signed-out caller learns nothing about the schema.
      actor = await getActor();
      if (spec.auth !== false && !actor) throw new AppError('unauthorized:auth');
      const body = spec.body
        ? parseOrThrow(spec.body, await readJson(request, spec.maxBodyBytes ?? DEFAULT_MAX_BODY_BYTES), 'body')
        : undefined;
      const result = await handler({ actor, params, query, body, request, ip });
      if (result instanceof Response) return result;
      return jsonResponse(result ?? { ok: true });
    } catch (err) {
      const appError = toAppError(normalizeError(err));
      if (appError.type === 'forbidden' || appError.context?.hiddenRefusal === true) {
        await recordAudit({
          action: 'auth.access_refused',
          actorId: actor?.userId ?? null,
          actorEmail: actor?.email ?? null,
          teamId: typeof appError.context?.teamId === 'number' ? appError.context.teamId : null,
          ip,
          outcome: 'refused',
          details: {
            method: request.method,
            path: safePath(request.url),
            action: appError.context?.action ?? null,
            code: appError.code,
          },
        });
      }
      if (appError.status >= 500 && appError.visibility === 'response') {
        log.error('route failed', { method: request.method, path: safePath(request.url), err: appError });
      }
      return appError.toResponse();
    }
  };
}

/** A JSON Response with `cache-control: no-store`. */
export function jsonResponse(data: unknown, init: { status?: number; headers?: HeadersInit } = {}): Response {
  const headers = new Headers(init.headers);
  headers.set('content-type', 'application/json; charset=utf-8');
  if (!headers.has('cache-control')) headers.set('cache-control', 'no-store');
  return new Response(JSON.stringify(data), { status: init.status ?? 200, headers });
}

// HELPERS //

/** One plain sentence per problem, naming the field (e.g. `name: Enter a name.`). */
export function describeZodIssues(error: z.ZodError, where: 'path' | 'query' | 'body' | 'form' = 'body'): string[] {
  return error.issues.map((issue) => {
    const field = issue.path.map(String).join('.');
    const label = field || (where === 'body' ? 'request body' : where === 'query' ? 'query' : where);
    const message = issue.message.endsWith('.') ? issue.message : `${issue.message}.`;
    return `${label}: ${message}`;
  });
}

/** Per-field messages (first one per field) for forms: `{ name: 'Enter a name.' }`. */
export function fieldErrors(error: z.ZodError): Record<string, string> {
  const out: Record<string, string> = {};
  for (const issue of error.issues) {
    const key = issue.path.map(String).join('.') || '_form';
    if (!(key in out)) out[key] = issue.message;
  }
  return out;
}

function parseOrThrow(schema: Schema, value: unknown, where: 'path' | 'query' | 'body'): unknown {
  const r = schema.safeParse(value);
  if (r.success) return r.data;
  throw new AppError('bad_request:api', {
    message:
      where === 'path'
        ? 'The address is not valid.'
        : where === 'query'
          ? 'Some query parameters are not valid.'
          : 'Some values are not valid.',
    details: describeZodIssues(r.error, where),
    context: { fields: fieldErrors(r.error) },
  });
}

/**
 * The origin check of a state-changing request. Browsers send Origin on every cross-origin request and on every
 * same-origin POST/PUT/PATCH/DELETE (Fetch standard); "null" (a sandboxed or privacy-hidden origin) is refused.
 */
export function assertSameOrigin(request: Request): void {
  const appOrigin = getEnv().APP_ORIGIN;
  const h = request.headers;
  const refuse = (seen: string) => {
    throw new AppError('forbidden:api', {
      message: 'This request did not come from a Lobeline page, so it was refused. Reload the page and try again.',
      context: { csrf: true, seen: seen.slice(0, 200) },
    });
  };
  const origin = h.get('origin');
  if (origin !== null) {
    if (origin !== appOrigin) refuse(`origin ${origin}`);
    return;
  }
  const site = h.get('sec-fetch-site');
  if (site !== null) {
    if (site !== 'same-origin' && site !== 'none') refuse(`sec-fetch-site ${site}`);
    return;
  }
  const referer = h.get('referer');
  if (referer !== null) {
    let refOrigin = '';
    try {
      refOrigin = new URL(referer).origin;
    } catch {
      refOrigin = '';
    }
    if (refOrigin !== appOrigin) refuse(`referer ${referer}`);
  }
}

function tooLarge(limit: number): AppError {
  const kib = Math.max(1, Math.floor(limit / 1024));
  return new AppError('too_large:api', {
    message: `The request body is larger than this address accepts (at most ${kib} KiB). Send less data at once.`,
    context: { limit },
  });
}

/** The body as text, refusing (413) past `limit` bytes, by Content-Length first and while streaming. */
async function readLimited(request: Request, limit: number): Promise<string> {
  const declared = Number(request.headers.get('content-length') ?? Number.NaN);
  if (Number.isFinite(declared) && declared > limit) throw tooLarge(limit);
  if (!request.body) return '';
  const reader = request.body.getReader();
  const chunks: Uint8Array[] = [];
  let total = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    total += value.byteLength;
    if (total > limit) {
      await reader.cancel().catch(() => undefined);
      throw tooLarge(limit);
    }
    chunks.push(value);
  }
  return new TextDecoder().decode(Buffer.concat(chunks));
}

async function readJson(request: Request, limit: number): Promise<unknown> {
  const text = await readLimited(request, limit);
  if (text.trim() === '') return undefined;
  const type = (request.headers.get('content-type') ?? '').split(';')[0]?.trim().toLowerCase();
  if (type !== 'application/json') {
    throw new AppError('unsupported_media:api', {
      message: 'Send this request as JSON (Content-Type: application/json).',
      details: ['request body: must be sent with Content-Type: application/json.'],
    });
  }
  try {
    return JSON.parse(text);
  } catch {
    throw new AppError('bad_request:api', {
      message: 'The request body is not valid JSON.',
      details: ['request body: must be a JSON document.'],
    });
  }
}

function searchParamsToObject(sp: URLSearchParams): Record<string, string | string[]> {
  const out: Record<string, string | string[]> = {};
  for (const key of new Set(sp.keys())) {
    const all = sp.getAll(key);
    out[key] = all.length > 1 ? all : (all[0] ?? '');
  }
  return out;
}

function safePath(url: string): string {
  try {
    return new URL(url).pathname.slice(0, 200);
  } catch {
    return '';
  }
}

/** Maps driver errors that escaped the data layer to their surfaces. */
function normalizeError(err: unknown): unknown {
  if (err instanceof AppError) return err;
  const name = (err as Error)?.name ?? '';
  if (name.startsWith('Sequelize')) {
    return new AppError(/Connection|Timeout/.test(name) ? 'unavailable:database' : 'internal:database', { cause: err });
  }
  if (err instanceof SyntaxError) return new AppError('bad_request:api', { cause: err });
  return err;
}
