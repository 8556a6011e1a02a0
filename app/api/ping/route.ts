// Health check for scripts (start.sh, test.sh): no auth, no database, no services.
export const dynamic = 'force-dynamic';

export function GET(): Response {
  return Response.json({ ok: true }, { headers: { 'cache-control': 'no-store' } });
}
