// Real checks of the local services and of the glue in lib/ that talks to them (test instance only; see setup.ts).
// Expected S3 behaviour follows the AWS S3 REST API reference (SigV4 query authentication: a presigned URL is valid
// only for the signed method, path, signed headers such as Content-Length, and until X-Amz-Date + X-Amz-Expires).
import { randomBytes, randomUUID } from 'node:crypto';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { request } from 'node:http';
import os from 'node:os';
import path from 'node:path';
import Redis from 'ioredis';
import { QueryTypes } from 'sequelize';
import { afterAll, describe, expect, it } from 'vitest';
import { closeSequelize, getSequelize } from '@/lib/db/client';
import { getMigrator } from '@/lib/db/migrator';
import { getEnv, resetEnvCache } from '@/lib/env';
import { AppError } from '@/lib/errors';
import { listCaughtMessages, readCaughtMessage, waitForCaughtMessage } from '@/lib/mail/catcher-store';
import { closeMailTransport, sendMail } from '@/lib/mail/transport';
import * as s3 from '@/lib/storage/s3';

const env = getEnv();
const raw = s3.buckets().raw;
const newKey = (label: string) => `integration/${label}-${randomUUID()}.bin`;

async function put(url: string, body: Uint8Array, headers: Record<string, string> = {}) {
  const res = await fetch(url, { method: 'PUT', body: new Uint8Array(body), headers });
  return { status: res.status, text: await res.text(), headers: res.headers };
}

async function expectStorageCode(p: Promise<unknown>, code: string) {
  const err = await p.then(
    () => null,
    (e: unknown) => e,
  );
  expect(err).toBeInstanceOf(AppError);
  expect((err as AppError).code).toBe(code);
}

afterAll(async () => {
  await closeSequelize();
  closeMailTransport();
  s3.closeS3Client();
});

describe('S3: presigned PUT', () => {
  it('accepts a correctly presigned PUT and stores exactly those bytes', async () => {
    const key = newKey('ok');
    const body = randomBytes(4099);
    const url = await s3.presignPut({ bucket: raw, key, contentLength: body.length, expiresIn: 120 });
    const signed = new URL(url).searchParams.get('X-Amz-SignedHeaders') ?? '';
    expect(signed.split(';')).toContain('content-length');

    const res = await put(url, body);
    expect(res.status).toBe(200);
    const info = await s3.headObject(raw, key);
    expect(info.size).toBe(body.length);
    const range = await s3.getObjectRange(raw, key, 1000, 1999);
    expect(Buffer.from(range).equals(body.subarray(1000, 2000))).toBe(true);
  });

  it('refuses a URL whose signature was changed, and stores nothing', async () => {
    const key = newKey('tampered-sig');
    const body = randomBytes(512);
    const url = new URL(await s3.presignPut({ bucket: raw, key, contentLength: body.length, expiresIn: 120 }));
    const sig = url.searchParams.get('X-Amz-Signature') ?? '';
    expect(sig).toMatch(/^[0-9a-f]{64}$/);
    url.searchParams.set('X-Amz-Signature', `${sig.slice(0, -1)}${sig.endsWith('0') ? '1' : '0'}`);
    const res = await put(url.toString(), body);
    expect(res.status).toBe(403);
    expect(res.text).toContain('SignatureDoesNotMatch');
    await expectStorageCode(s3.headObject(raw, key), 'not_found:storage');
  });

  it('refuses a body whose length differs from the signed Content-Length', async () => {
    const key = newKey('tampered-length');
    const url = await s3.presignPut({ bucket: raw, key, contentLength: 1000, expiresIn: 120 });
    const longer = await put(url, randomBytes(1001));
    expect(longer.status).toBe(403);
    expect(longer.text).toContain('SignatureDoesNotMatch');
    const shorter = await put(url, randomBytes(10));
    expect(shorter.status).toBe(403);
    await expectStorageCode(s3.headObject(raw, key), 'not_found:storage');
  });

  it('refuses the URL of one key used for another key', async () => {
    const key = newKey('scoped');
    const url = await s3.presignPut({ bucket: raw, key, contentLength: 8, expiresIn: 120 });
    const other = url.replace(encodeURIComponent(key.split('/')[1] ?? '').slice(0, 20), 'someone-elses-object');
    expect(other).not.toBe(url);
    const res = await put(other, randomBytes(8));
    expect(res.status).toBe(403);
  });

  it('refuses an expired URL', async () => {
    const key = newKey('expired');
    const body = randomBytes(64);
    const url = await s3.presignPut({ bucket: raw, key, contentLength: body.length, expiresIn: 1 });
    await new Promise((r) => setTimeout(r, 2200));
    const res = await put(url, body);
    expect(res.status).toBe(403);
    expect(res.text).toMatch(/expired/i);
    await expectStorageCode(s3.headObject(raw, key), 'not_found:storage');
  });

  it('refuses presign requests outside the allowed expiry', async () => {
    await expect(s3.presignPut({ bucket: raw, key: newKey('x'), contentLength: 1, expiresIn: 7200 })).rejects.toThrow(
      /expiry/,
    );
  });
});

describe('S3: CORS for the app origin', () => {
  const objectUrl = () => `${env.S3_ENDPOINT}/${raw}/${newKey('cors')}`;

  it('answers a preflight from APP_ORIGIN with the allowed method and headers', async () => {
    const res = await fetch(objectUrl(), {
      method: 'OPTIONS',
      headers: {
        Origin: env.APP_ORIGIN,
        'Access-Control-Request-Method': 'PUT',
        'Access-Control-Request-Headers': 'content-type,x-amz-date',
      },
    });
    expect(res.status).toBe(200);
    expect(res.headers.get('access-control-allow-origin')).toMatch(new RegExp(`^(\\*|${env.APP_ORIGIN})$`));
    expect(res.headers.get('access-control-allow-methods')).toContain('PUT');
    expect(res.headers.get('access-control-allow-headers')).toBe('content-type, x-amz-date');
  });

  it('refuses a preflight from another origin', async () => {
    const res = await fetch(objectUrl(), {
      method: 'OPTIONS',
      headers: { Origin: 'http://elsewhere.example', 'Access-Control-Request-Method': 'PUT' },
    });
    expect(res.status).toBe(403);
    expect(res.headers.get('access-control-allow-origin')).toBeNull();
  });

  it('exposes ETag on the actual upload response to the app origin', async () => {
    const key = newKey('cors-put');
    const body = randomBytes(100);
    const url = await s3.presignPut({ bucket: raw, key, contentLength: body.length, expiresIn: 60 });
    const res = await put(url, body, { Origin: env.APP_ORIGIN });
    expect(res.status).toBe(200);
    expect(res.headers.get('access-control-allow-origin')).toBe(env.APP_ORIGIN);
    expect(res.headers.get('access-control-expose-headers')).toContain('ETag');
    expect(res.headers.get('etag')).toMatch(/^"[0-9a-f]{32}"$/);
  });
});

describe('S3: multipart upload through presigned parts', () => {
  it('uploads parts, lists them, completes and reads across the part boundary', async () => {
    const key = newKey('multipart');
    const part1 = randomBytes(5 * 1024 * 1024);
    const part2 = randomBytes(123_457);
    const { uploadId } = await s3.createMultipart({ bucket: raw, key, contentType: 'application/x-hdf5' });
    const etags: string[] = [];
    for (const [i, part] of [part1, part2].entries()) {
      const url = await s3.presignUploadPart({
        bucket: raw,
        key,
        uploadId,
        partNumber: i + 1,
        contentLength: part.length,
        expiresIn: 120,
      });
      const res = await put(url, part);
      expect(res.status).toBe(200);
      etags.push(res.headers.get('etag') ?? '');
    }
    const listed = await s3.listParts({ bucket: raw, key, uploadId });
    expect(listed.map((p) => [p.partNumber, p.etag, p.size])).toEqual([
      [1, etags[0], part1.length],
      [2, etags[1], part2.length],
    ]);
    await s3.completeMultipart({ bucket: raw, key, uploadId, parts: listed });
    const info = await s3.headObject(raw, key);
    expect(info.size).toBe(part1.length + part2.length);
    const start = part1.length - 10;
    const got = await s3.getObjectRange(raw, key, start, start + 19);
    expect(Buffer.from(got).equals(Buffer.concat([part1.subarray(-10), part2.subarray(0, 10)]))).toBe(true);
  });

  it('refuses a part whose length differs from the signed one', async () => {
    const key = newKey('multipart-bad');
    const { uploadId } = await s3.createMultipart({ bucket: raw, key });
    const url = await s3.presignUploadPart({ bucket: raw, key, uploadId, partNumber: 1, contentLength: 100 });
    const res = await put(url, randomBytes(101));
    expect(res.status).toBe(403);
    expect(await s3.listParts({ bucket: raw, key, uploadId })).toEqual([]);
    await s3.abortMultipart({ bucket: raw, key, uploadId });
  });

  it('leaves out a part whose PUT was cut off half-way (a reload mid-part) and still lists the stored ones', async () => {
    // S3 keeps a part only once its whole body has arrived (UploadPart, AWS S3 API reference); the listing of the
    // other parts must not fail because of the torn one.
    const key = newKey('multipart-torn');
    const { uploadId } = await s3.createMultipart({ bucket: raw, key });
    const whole = randomBytes(5 * 1024 * 1024);
    const url1 = await s3.presignUploadPart({ bucket: raw, key, uploadId, partNumber: 1, contentLength: whole.length });
    expect((await put(url1, whole)).status).toBe(200);
    const torn = randomBytes(5 * 1024 * 1024);
    const url2 = new URL(
      await s3.presignUploadPart({ bucket: raw, key, uploadId, partNumber: 2, contentLength: torn.length }),
    );
    await new Promise<void>((resolve) => {
      const req = request(url2, { method: 'PUT', headers: { 'content-length': String(torn.length) } });
      req.on('error', () => resolve());
      req.on('close', () => resolve());
      req.write(torn.subarray(0, 2 * 1024 * 1024), () => setTimeout(() => req.destroy(), 300));
    });
    await new Promise((r) => setTimeout(r, 300));
    const listed = await s3.listParts({ bucket: raw, key, uploadId });
    expect(listed.map((p) => [p.partNumber, p.size])).toEqual([[1, whole.length]]);
    await s3.abortMultipart({ bucket: raw, key, uploadId });
  });

  it('aborts an upload: its parts are gone afterwards', async () => {
    const key = newKey('multipart-abort');
    const { uploadId } = await s3.createMultipart({ bucket: raw, key });
    const part = randomBytes(1000);
    const url = await s3.presignUploadPart({ bucket: raw, key, uploadId, partNumber: 1, contentLength: part.length });
    expect((await put(url, part)).status).toBe(200);
    expect(await s3.listParts({ bucket: raw, key, uploadId })).toHaveLength(1);
    await s3.abortMultipart({ bucket: raw, key, uploadId });
    await expectStorageCode(s3.listParts({ bucket: raw, key, uploadId }), 'not_found:storage');
  });
});

describe('S3: errors become AppErrors', () => {
  it('a missing object is not_found:storage with a 404 and a generic message', async () => {
    const key = newKey('missing');
    const err = await s3.getObjectStream(raw, key).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(AppError);
    const res = (err as AppError).toResponse();
    expect(res.status).toBe(404);
    const json = (await res.json()) as { error: { code: string; message: string } };
    expect(json.error.code).toBe('not_found:storage');
    expect(json.error.message).not.toContain(key);
  });

  it('an unreachable S3 endpoint is unavailable:storage (503), without leaking the endpoint', async () => {
    const saved = process.env.S3_ENDPOINT;
    process.env.S3_ENDPOINT = 'http://127.0.0.1:9';
    resetEnvCache();
    s3.closeS3Client();
    try {
      const err = await s3.headObject(raw, newKey('down')).catch((e: unknown) => e);
      expect(err).toBeInstanceOf(AppError);
      expect((err as AppError).code).toBe('unavailable:storage');
      const json = (await (err as AppError).toResponse().json()) as { error: { message: string } };
      expect(json.error.message).not.toContain('127.0.0.1');
    } finally {
      process.env.S3_ENDPOINT = saved;
      resetEnvCache();
      s3.closeS3Client();
    }
  });
});

describe('SMTP catcher', () => {
  it('receives a mail sent through lib/mail/transport; catcher-store reads it back', async () => {
    const to = `probe-${randomUUID()}@harbor-point.example`;
    const subject = `Shift receipt ${randomUUID()}`;
    await sendMail({ to, subject, text: 'Three files received.', html: '<p>Three <b>files</b> received.</p>' });
    const msg = await waitForCaughtMessage((m) => m.subject === subject);
    expect(msg.to).toEqual([to]);
    expect(msg.text.trim()).toBe('Three files received.');
    expect(msg.html).toContain('<b>files</b>');
    expect(msg.from).toContain('no-reply@harbor-point.example');
    expect(await readCaughtMessage(msg.id)).toEqual(msg);
    expect(await readCaughtMessage('../../etc/passwd')).toBeNull();
  });

  it('lists newest first and filters by recipient', async () => {
    const to = `order-${randomUUID()}@harbor-point.example`;
    await sendMail({ to, subject: 'first', text: '1' });
    await new Promise((r) => setTimeout(r, 20));
    await sendMail({ to, subject: 'second', text: '2' });
    await waitForCaughtMessage((m) => m.to.includes(to) && m.subject === 'second');
    const mine = await listCaughtMessages({ to });
    expect(mine.map((m) => m.subject)).toEqual(['second', 'first']);
  });

  it('an unreachable SMTP server is unavailable:mail', async () => {
    const saved = process.env.SMTP_PORT;
    process.env.SMTP_PORT = '9';
    resetEnvCache();
    closeMailTransport();
    try {
      const err = await sendMail({ to: 'nobody@harbor-point.example', subject: 's', text: 't' }).catch((e) => e);
      expect(err).toBeInstanceOf(AppError);
      expect((err as AppError).code).toBe('unavailable:mail');
    } finally {
      process.env.SMTP_PORT = saved;
      resetEnvCache();
      closeMailTransport();
    }
  });
});

describe('Redis and MariaDB', () => {
  it('Redis answers PING', async () => {
    const redis = new Redis(env.REDIS_URL, { maxRetriesPerRequest: null, lazyConnect: true });
    try {
      await redis.connect();
      expect(await redis.ping()).toBe('PONG');
    } finally {
      redis.disconnect();
    }
  });

  it('MariaDB answers SELECT 1 on the test database as the test user', async () => {
    const rows = await getSequelize().query<{ one: number; db: string; who: string }>(
      'SELECT 1 AS one, DATABASE() AS db, CURRENT_USER() AS who',
      { type: QueryTypes.SELECT },
    );
    expect(rows).toEqual([{ one: 1, db: env.DB_NAME, who: `${env.DB_USER}@127.0.0.1` }]);
  });

  const tableNames = async () =>
    (
      await getSequelize().query<{ name: string }>(
        'SELECT table_name AS name FROM information_schema.tables WHERE table_schema = DATABASE()',
        { type: QueryTypes.SELECT },
      )
    ).map((r) => r.name);

  it('the migrator applies and reverts migrations from a folder, recording them', async () => {
    const dir = mkdtempSync(path.join(os.tmpdir(), 'lobeline-migrations-'));
    const table = `zz_probe_${randomBytes(4).toString('hex')}`;
    writeFileSync(
      path.join(dir, '0001-probe.ts'),
      `export async function up({ context }) { await context.createTable('${table}', { id: { type: 'INTEGER', primaryKey: true } }); }\n` +
        `export async function down({ context }) { await context.dropTable('${table}'); }\n`,
    );
    const migrator = getMigrator({ dir, tableName: `${table}_meta` });
    try {
      expect((await migrator.pending()).map((m) => m.name)).toEqual(['0001-probe.ts']);
      await migrator.up();
      expect((await migrator.executed()).map((m) => m.name)).toEqual(['0001-probe.ts']);
      expect(await tableNames()).toContain(table);
      await migrator.down();
      expect(await tableNames()).not.toContain(table);
      expect(await migrator.pending()).toHaveLength(1);
    } finally {
      await getSequelize()
        .getQueryInterface()
        .dropTable(`${table}_meta`)
        .catch(() => undefined);
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
