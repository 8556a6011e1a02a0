// Reads the messages the local SMTP catcher (scripts/local-services.ts) stored as JSON files in MAIL_CATCHER_DIR.
// For the dev mailbox page and for tests; there is no catcher in production (MAIL_CATCHER_DIR unset).
import { readdir, readFile } from 'node:fs/promises';
import path from 'node:path';
import { z } from 'zod';

export const caughtMessageSchema = z.object({
  id: z.string().regex(/^[A-Za-z0-9_-]+$/),
  date: z.string(),
  from: z.string(),
  to: z.array(z.string()),
  subject: z.string(),
  text: z.string(),
  html: z.string(),
});
export type CaughtMessage = z.infer<typeof caughtMessageSchema>;

/** The catcher folder (relative paths are taken from the working directory, i.e. the repo root), or null. */
export function catcherDir(dir = process.env.MAIL_CATCHER_DIR): string | null {
  if (!dir || dir.trim() === '') return null;
  return path.resolve(process.cwd(), dir);
}

async function readOne(file: string): Promise<CaughtMessage | null> {
  try {
    const parsed = caughtMessageSchema.safeParse(JSON.parse(await readFile(file, 'utf8')));
    return parsed.success ? parsed.data : null;
  } catch {
    return null; // half-written or foreign file: skip it
  }
}

/** Messages, newest first. `to` keeps only those addressed to that recipient (case-insensitive). */
export async function listCaughtMessages(
  options: { dir?: string; to?: string; limit?: number } = {},
): Promise<CaughtMessage[]> {
  const dir = options.dir ? path.resolve(options.dir) : catcherDir();
  if (!dir) return [];
  let names: string[];
  try {
    names = (await readdir(dir)).filter((n) => n.endsWith('.json'));
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === 'ENOENT') return [];
    throw err;
  }
  const messages = (await Promise.all(names.map((n) => readOne(path.join(dir, n))))).filter(
    (m): m is CaughtMessage => m !== null,
  );
  const want = options.to?.toLowerCase();
  const filtered = want ? messages.filter((m) => m.to.some((t) => t.toLowerCase().includes(want))) : messages;
  filtered.sort((a, b) => Date.parse(b.date) - Date.parse(a.date) || b.id.localeCompare(a.id));
  return options.limit ? filtered.slice(0, options.limit) : filtered;
}

export async function readCaughtMessage(id: string, options: { dir?: string } = {}): Promise<CaughtMessage | null> {
  if (!/^[A-Za-z0-9_-]+$/.test(id)) return null;
  const dir = options.dir ? path.resolve(options.dir) : catcherDir();
  if (!dir) return null;
  // The catcher names each file after the message id.
  const message = await readOne(path.join(dir, `${id}.json`));
  return message?.id === id ? message : null;
}

/** Polls until a message matching `match` arrives (tests): resolves with it or rejects after timeoutMs. */
export async function waitForCaughtMessage(
  match: (m: CaughtMessage) => boolean,
  options: { dir?: string; timeoutMs?: number } = {},
): Promise<CaughtMessage> {
  const deadline = Date.now() + (options.timeoutMs ?? 10_000);
  while (Date.now() < deadline) {
    const found = (await listCaughtMessages({ dir: options.dir })).find(match);
    if (found) return found;
    await new Promise((r) => setTimeout(r, 100));
  }
  throw new Error('no matching message arrived in the mail catcher in time');
}
