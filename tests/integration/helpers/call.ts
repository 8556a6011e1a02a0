// Calls a route handler module in-process with a real Request, as Next would.
import type { RouteHandler } from '@/lib/api/route';

export interface CallInput {
  method: string;
  /** Path with the dynamic segments filled in, e.g. /api/shifts/12. */
  path: string;
  params?: Record<string, string>;
  query?: Record<string, string | number>;
  body?: unknown;
  ip?: string;
}

export async function callRoute(
  handler: RouteHandler | ((request: Request, context?: unknown) => Promise<Response> | Response),
  input: CallInput,
): Promise<{ status: number; json: unknown; response: Response }> {
  const url = new URL(`http://127.0.0.1:3100${input.path}`);
  for (const [k, v] of Object.entries(input.query ?? {})) url.searchParams.set(k, String(v));
  const headers = new Headers({ 'x-forwarded-for': input.ip ?? '10.77.0.1' });
  let body: string | undefined;
  if (input.body !== undefined) {
    headers.set('content-type', 'application/json');
    body = JSON.stringify(input.body);
  }
  const request = new Request(url, { method: input.method, headers, body });
  const response = await (handler as (r: Request, c: unknown) => Promise<Response>)(request, {
    params: Promise.resolve(input.params ?? {}),
  });
  const text = await response.clone().text();
  let json: unknown = null;
  try {
    json = text ? JSON.parse(text) : null;
  } catch {
    json = text;
  }
  return { status: response.status, json, response };
}
