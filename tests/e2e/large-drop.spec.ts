// A large file through the browser (C2): the demo operator drops one big uncompressed scan file and two small ones
// on a shift, sends them, reloads the page in the middle of the big upload, drops the files again and sends again.
// The big upload must continue where it stopped (no part that was already stored is sent again), the object in
// storage must have the file's SHA-256 (computed here with node:crypto over the file on disk and again over the
// object read back from S3, both independent of the app), and the receipt (page and e-mail) must name it.
//
// Size: LOBELINE_LARGE_DROP_STEPS frames of 512 × 512 float32, 1 MiB each (default 120 ≈ 126 MB, 16 parts of
// 8 MiB, which keeps the normal suite short). LOBELINE_LARGE_DROP_STEPS=1000 gives the 1 GB case (≈ 1.05 GB,
// 126 parts); allow several minutes for it on a 2-core machine. The files are made in a temp folder under
// .data/test and removed afterwards.
import { execFileSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { createReadStream, mkdirSync, mkdtempSync, rmSync, statSync } from 'node:fs';
import path from 'node:path';
import type { Readable } from 'node:stream';
import { GetObjectCommand, S3Client } from '@aws-sdk/client-s3';
import { expect, type Page, test } from '@playwright/test';
import * as mariadb from 'mariadb';
import { waitForCaughtMessage } from '@/lib/mail/catcher-store';
import { DEMO, MAIL_DIR, signIn } from './helpers/auth';

const STEPS = Number(process.env.LOBELINE_LARGE_DROP_STEPS ?? 120);
/**
 * Parts of the big file let through before the reload. Every later part PUT of the first page load is held (never
 * answered) until the page reloads, so the reload always comes in the middle of the upload, however fast or slow
 * the machine: without the gate a fast run could send every part (and ask for verification) before the reloaded
 * document replaced the old one.
 */
const PARTS_BEFORE_RELOAD = 5;
/** Generous per-MiB allowance for send + verify on a loaded 2-core machine, plus a fixed part. */
const budgetMs = (mib: number) => 60_000 + mib * 400;

function makeExample(out: string, args: string[]): string {
  execFileSync(path.resolve('node_modules/.bin/tsx'), ['scripts/make-example.ts', '--out', out, ...args], {
    stdio: 'ignore',
  });
  return out;
}

async function sha256OfStream(stream: Readable): Promise<{ sha256: string; bytes: number }> {
  const h = createHash('sha256');
  let bytes = 0;
  for await (const chunk of stream as AsyncIterable<Buffer>) {
    h.update(chunk);
    bytes += chunk.length;
  }
  return { sha256: h.digest('hex'), bytes };
}

/** The object the catalogue points at for `sha256`, read from the database and S3 with their own clients. */
async function storedObject(sha256: string) {
  const env = process.env;
  const conn = await mariadb.createConnection({
    host: env.DB_HOST ?? '127.0.0.1',
    port: Number(env.DB_PORT ?? 3317),
    user: env.DB_USER,
    password: env.DB_PASSWORD,
    database: env.DB_NAME,
  });
  let rows: { bucket: string; storage_key: string; size_bytes: number | bigint; status: string }[];
  try {
    rows = await conn.query('SELECT bucket, storage_key, size_bytes, status FROM raw_files WHERE sha256 = ?', [sha256]);
  } finally {
    await conn.end();
  }
  expect(rows).toHaveLength(1);
  const row = rows[0]!;
  const s3 = new S3Client({
    endpoint: env.S3_ENDPOINT,
    region: env.S3_REGION ?? 'us-east-1',
    forcePathStyle: true,
    credentials: { accessKeyId: env.S3_ACCESS_KEY_ID ?? '', secretAccessKey: env.S3_SECRET_ACCESS_KEY ?? '' },
  });
  try {
    const got = await s3.send(new GetObjectCommand({ Bucket: row.bucket, Key: row.storage_key }));
    return { row, ...(await sha256OfStream(got.Body as Readable)) };
  } finally {
    s3.destroy();
  }
}

async function openShift(page: Page): Promise<{ shiftId: number; target: string; wavelengthNm: number }> {
  const res = await page.request.get('/api/campaigns');
  expect(res.ok()).toBeTruthy();
  const { campaigns } = (await res.json()) as {
    campaigns: { id: number; experimentKind: string; target: string; wavelengthNm: number }[];
  };
  const campaign = campaigns.find((c) => c.experimentKind === 'angular_streaking');
  expect(campaign, 'the demo operator has an angular-streaking campaign').toBeDefined();
  const opened = await page.request.post('/api/shifts', {
    data: { campaignId: campaign!.id, title: `Large drop ${Date.now()}` },
  });
  expect(opened.ok()).toBeTruthy();
  const body = (await opened.json()) as { shift?: { id: number }; id?: number };
  return { shiftId: (body.shift?.id ?? body.id)!, target: campaign!.target, wavelengthNm: campaign!.wavelengthNm };
}

test('a large file survives a reload mid-upload and is stored byte for byte', async ({ page }) => {
  const mib = STEPS;
  test.setTimeout(180_000 + 3 * budgetMs(mib));
  const root = path.resolve('.data/test');
  mkdirSync(root, { recursive: true });
  const dir = mkdtempSync(path.join(root, 'large-drop-'));
  const times: Record<string, number> = {};
  const t0 = Date.now();
  const lap = (name: string) => {
    times[name] = (Date.now() - t0) / 1000;
  };
  try {
    await signIn(page, DEMO.operator);
    const { shiftId, target, wavelengthNm } = await openShift(page);

    // Files that match the campaign, each with its own seed so none is a duplicate of an earlier run's file.
    const seed = String(Date.now() % 1e8);
    const common = ['--kind', 'angular_streaking', '--target', target, '--wavelength', String(wavelengthNm)];
    const big = makeExample(path.join(dir, `large-${mib}-steps.h5`), [
      ...common,
      '--steps',
      String(STEPS),
      '--size',
      '512',
      '--compression',
      'none',
      '--dtype',
      'float32',
      '--seed',
      seed,
    ]);
    const small = [1, 2].map((i) =>
      makeExample(path.join(dir, `small-${i}.h5`), [...common, '--steps', '3', '--size', '512', '--seed', seed + i]),
    );
    lap('files generated');
    const size = statSync(big).size;
    expect(size).toBeGreaterThan(STEPS * 512 * 512 * 4);
    const { sha256: fileSha } = await sha256OfStream(createReadStream(big));
    lap('file hashed in node');

    // Every PUT to storage, with the page load (document) that started it. The load number changes when the
    // reloaded document commits, not when the test asks for the reload: until the commit the old document keeps
    // its uploads going and may start (and finish) more parts, which belong to load 1.
    let load = 1;
    let reloading = false;
    page.on('framenavigated', (frame) => {
      if (reloading && frame === page.mainFrame()) {
        load = 2;
        reloading = false;
      }
    });
    const puts: { load: number; part: number | null; status: number }[] = [];
    // a PUT belongs to the page load that started it (one started before the reload may finish after it)
    const startedIn = new WeakMap<object, number>();
    page.on('request', (r) => {
      if (r.method() === 'PUT') startedIn.set(r, load);
    });
    page.on('requestfinished', async (r) => {
      if (r.method() !== 'PUT') return;
      const at = startedIn.get(r) ?? load;
      const part = new URL(r.url()).searchParams.get('partNumber');
      puts.push({ load: at, part: part === null ? null : Number(part), status: (await r.response())?.status() ?? 0 });
    });
    const tickets: {
      status: number;
      body: { resumed: boolean; partCount?: number; partsDone?: { partNumber: number }[] };
    }[] = [];
    page.on('response', async (r) => {
      if (r.request().method() !== 'POST' || new URL(r.url()).pathname !== '/api/uploads') return;
      const body = await r.json().catch(() => null);
      if (body && 'partCount' in body) tickets.push({ status: r.status(), body });
    });

    // The gate on part PUTs of the first page load (see PARTS_BEFORE_RELOAD); the held ones die with the old document.
    let passed = 0;
    const held: unknown[] = [];
    await page.route(
      (url) => url.searchParams.has('partNumber') && url.searchParams.has('uploadId'),
      async (route) => {
        if (route.request().method() === 'PUT' && load === 1 && passed >= PARTS_BEFORE_RELOAD) {
          held.push(route);
          return;
        }
        if (route.request().method() === 'PUT' && load === 1) passed++;
        await route.continue();
      },
    );

    await page.goto(`/shifts/${shiftId}`);
    await expect(page.getByTestId('safety-notice')).toBeVisible();
    await page.waitForLoadState('networkidle'); // the drop zone listens only once the page is hydrated
    const bigName = path.basename(big);
    const row = page.locator(`[data-testid=drop-item][data-file="${bigName}"]`);
    const progress = row.getByTestId('item-progress');

    // 1. Drop, see the pre-check, send, and reload in the middle.
    await page.getByTestId('dropzone-input').setInputFiles([big, ...small]);
    await expect(row.getByTestId('precheck-summary')).toContainText(`${STEPS} ×`, { timeout: 60_000 });
    await expect(row.getByTestId('precheck-summary')).toContainText('512 × 512 px');
    lap('pre-check shown');
    await page.getByTestId('send-all').click();
    await expect
      .poll(() => ({ stored: puts.filter((p) => p.part !== null && p.status === 200).length, held: held.length }), {
        timeout: budgetMs(mib),
      })
      .toEqual({ stored: PARTS_BEFORE_RELOAD, held: expect.any(Number) });
    await expect.poll(() => held.length > 0, { timeout: budgetMs(mib) }).toBe(true);
    lap('reload');
    reloading = true;
    await page.reload();
    expect(load, 'the reloaded document committed').toBe(2);
    await page.waitForLoadState('networkidle');

    // 2. The page lists the unfinished upload; the same file dropped again continues it.
    await expect(page.getByTestId('unfinished')).toContainText(bigName);
    await page.getByTestId('dropzone-input').setInputFiles([big, ...small]);
    await expect(row.getByTestId('precheck-summary')).toContainText(`${STEPS} ×`, { timeout: 60_000 });
    await expect(row).toContainText('continues an unfinished upload');
    await page.getByTestId('send-all').click();
    await expect(progress).toContainText('were already stored', { timeout: 30_000 });
    await expect(row).toHaveAttribute('data-phase', 'done', { timeout: budgetMs(mib) });
    lap('big file accepted');
    await expect(row).toContainText('Accepted');
    await expect(row.getByTestId('item-outcome')).toContainText(fileSha);

    // 3. The resume sent only what was missing. The server's list of stored parts (the resumed ticket) holds every
    // part the browser saw answered before the reload, and maybe a few more whose answer the reload cut off.
    const before = new Set(puts.filter((p) => p.load === 1 && p.part !== null && p.status === 200).map((p) => p.part));
    const after = puts.filter((p) => p.load === 2 && p.part !== null).map((p) => p.part!);
    const resumed = tickets.find((t) => t.status === 200 && t.body.resumed);
    expect(resumed, 'the second ticket resumes the first upload').toBeDefined();
    const partCount = resumed!.body.partCount!;
    const stored = new Set((resumed!.body.partsDone ?? []).map((p) => p.partNumber));
    const diag = `answered before: ${[...before].join(',')}; stored: ${[...stored].join(',')}; sent after: ${after.join(',')}`;
    expect(before.size, diag).toBeGreaterThan(0);
    expect(
      [...before].filter((p) => !stored.has(p!)),
      'parts answered before the reload are kept',
    ).toEqual([]);
    expect(
      after.filter((p) => stored.has(p)),
      `parts stored before the reload are not sent again (${diag})`,
    ).toEqual([]);
    expect(new Set([...stored, ...after]).size).toBe(partCount);
    expect(after.length).toBe(partCount - stored.size);

    // 4. Storage holds exactly the file's bytes.
    const object = await storedObject(fileSha);
    expect(object.row.status).toBe('accepted');
    expect(Number(object.row.size_bytes)).toBe(size);
    expect(object.bytes).toBe(size);
    expect(object.sha256).toBe(fileSha);
    lap('object read back');

    // 5. The small files too; then close the shift and read the receipt. Two files of a batch go at once, so a small
    // file may already have been stored before the reload: dropped again, the pre-check then names it as identical
    // to a scan of this campaign and waits for a confirmation that the operator does not need to give.
    for (const f of small) {
      const item = page.locator(`[data-testid=drop-item][data-file="${path.basename(f)}"]`);
      await expect
        .poll(
          async () => {
            if ((await item.getAttribute('data-phase')) === 'done') return 'done';
            const note = item.getByTestId('precheck-attention');
            return (await note.count()) > 0 && /already scan/.test((await note.first().textContent()) ?? '')
              ? 'already stored'
              : 'waiting';
          },
          { timeout: 60_000 },
        )
        .not.toBe('waiting');
    }
    // Two files of a batch go at once, so the small files may already have been stored before the reload; dropped
    // again, they are then linked duplicates of themselves. Each of the three files is stored and accepted.
    for (const f of [big, ...small]) {
      await expect(
        page
          .getByTestId('stored-files')
          .locator(`[data-file="${path.basename(f)}"][data-status=accepted]`)
          .first(),
      ).toBeVisible();
    }
    await page.getByTestId('close-shift-button').click();
    await page.getByTestId('confirm-close').click();
    // the receipt table shows the hash shortened, with the full value in the cell's data attribute and title
    const shaCell = page.getByTestId('receipt').locator(`[data-sha256="${fileSha}"]`);
    await expect(shaCell).toContainText(`${fileSha.slice(0, 12)}…${fileSha.slice(-4)}`);
    await expect(shaCell.getByTitle(fileSha)).toBeVisible();
    const mail = await waitForCaughtMessage((m) => m.to.includes(DEMO.operator) && m.text.includes(fileSha), {
      dir: MAIL_DIR,
      timeoutMs: 20_000,
    });
    for (const f of small) expect(mail.text).toContain(path.basename(f));
    lap('receipt');
    test.info().annotations.push({
      type: 'timings',
      description: `${(size / 1e6).toFixed(0)} MB, ${partCount} parts, ${stored.size} stored before the reload (${before.size} answered), ${after.length} sent after; ${JSON.stringify(times)}`,
    });
    console.log(
      'large-drop',
      (size / 1e6).toFixed(0),
      'MB',
      JSON.stringify(times),
      'parts',
      partCount,
      stored.size,
      before.size,
      after.length,
    );
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});
