// One Node process with the two local stand-ins Lobeline needs in dev and test (started by scripts/services.ts):
//  - an S3-compatible service (@20minutes/s3rver 4, SigV4 signatures checked) with the three buckets and a CORS
//    rule for the app's origin, plus ListParts and AbortMultipartUpload, which s3rver itself lacks;
//  - an SMTP catcher that stores every message as JSON {id, date, from, to[], subject, text, html}.
// Configuration comes from the environment (services.ts passes it): LOBELINE_DATA_DIR, S3_ENDPOINT (port),
// S3_ACCESS_KEY_ID, S3_SECRET_ACCESS_KEY, S3_BUCKET_RAW/DERIVED/ARCHIVE, APP_ORIGIN, SMTP_PORT, MAIL_CATCHER_DIR,
// LOBELINE_LOCAL_S3=0 to run the mail catcher only.
import { randomBytes } from 'node:crypto';
import { mkdirSync } from 'node:fs';
import { readdir, readFile, rename, rm, stat, writeFile } from 'node:fs/promises';
import { createRequire } from 'node:module';
import path from 'node:path';
import { simpleParser } from 'mailparser';
import { SMTPServer } from 'smtp-server';

const require = createRequire(import.meta.url);

function say(msg: string, fields: Record<string, unknown> = {}): void {
  process.stdout.write(`${JSON.stringify({ time: new Date().toISOString(), msg, ...fields })}\n`);
}

function need(name: string): string {
  const v = process.env[name];
  if (!v) throw new Error(`local-services: ${name} is not set`);
  return v;
}

// ---------- S3 ----------

interface KoaCtx {
  method: string;
  path: string;
  query: Record<string, string | string[] | undefined>;
  params?: Record<string, string>;
  body: unknown;
  status: number;
  set(name: string, value: string): void;
}
type Next = () => Promise<void> | void;
type Middleware = (ctx: KoaCtx, next: Next) => Promise<void> | void;
interface S3rverInstance {
  middleware: Middleware[];
  store: { getResourcePath(bucket: string, key: string | undefined, resource: string): string };
  run(): Promise<{ address: string; port: number }>;
  close(): Promise<void>;
}
type S3rverCtor = new (options: Record<string, unknown>) => S3rverInstance;
interface S3ErrorCtor {
  new (code: string, message: string, detail?: Record<string, unknown>): Error;
}

function corsXml(origin: string): string {
  const methods = ['PUT', 'GET', 'HEAD', 'POST', 'DELETE'].map((m) => `<AllowedMethod>${m}</AllowedMethod>`).join('');
  return (
    '<CORSConfiguration><CORSRule>' +
    `<AllowedOrigin>${origin}</AllowedOrigin>${methods}` +
    '<AllowedHeader>*</AllowedHeader><ExposeHeader>ETag</ExposeHeader><MaxAgeSeconds>3000</MaxAgeSeconds>' +
    '</CORSRule></CORSConfiguration>'
  );
}

/**
 * s3rver 4 answers GET ?uploadId (ListParts) and DELETE ?uploadId (AbortMultipartUpload) with MethodNotAllowed.
 * This middleware, placed in front of s3rver's router, serves both from s3rver's own upload folder, after the
 * same CORS and SigV4 checks s3rver applies to every other request.
 */
function multipartExtras(app: S3rverInstance): Middleware {
  const cors = require('@20minutes/s3rver/lib/middleware/cors') as () => Middleware;
  const authentication = require('@20minutes/s3rver/lib/middleware/authentication') as () => Middleware;
  const S3Error = require('@20minutes/s3rver/lib/models/error') as S3ErrorCtor;
  const corsMw = cors();
  const authMw = authentication();

  return async (ctx, next) => {
    const uploadId = ctx.query.uploadId;
    if (!(ctx.method === 'GET' || ctx.method === 'DELETE') || typeof uploadId !== 'string') return next();
    const [, bucket, ...rest] = ctx.path.split('/');
    if (!bucket || rest.length === 0 || rest.join('') === '') return next();
    const key = rest.map((s) => decodeURIComponent(s)).join('/');
    ctx.params = { bucket, key };
    if (!/^[A-Za-z0-9]+$/.test(uploadId)) {
      throw new S3Error('NoSuchUpload', 'The specified upload does not exist.', { UploadId: uploadId });
    }
    await corsMw(ctx, () =>
      authMw(ctx, async () => {
        const dir = path.join(app.store.getResourcePath(bucket, undefined, 'uploads'), uploadId);
        let storedKey: string;
        try {
          storedKey = (await readFile(path.join(dir, 'key'))).toString();
        } catch {
          throw new S3Error('NoSuchUpload', 'The specified upload does not exist.', { UploadId: uploadId });
        }
        if (storedKey !== key) {
          throw new S3Error('NoSuchUpload', 'The specified upload does not exist.', { UploadId: uploadId });
        }
        if (ctx.method === 'DELETE') {
          await rm(dir, { recursive: true, force: true });
          ctx.status = 204;
          ctx.body = '';
          return;
        }
        // s3rver writes a part's bytes first and its `.md5` once they are all in; a part whose PUT was cut off
        // (the browser reloaded mid-part) keeps a partial file and never gets one. As in S3, such a part was
        // never stored: leave it out instead of failing the whole listing.
        const names = new Set(await readdir(dir));
        const numbers = [...names]
          .filter((n) => /^\d+$/.test(n) && names.has(`${n}.md5`))
          .map(Number)
          .sort((a, b) => a - b);
        const marker = Number(ctx.query['part-number-marker'] ?? 0) || 0;
        const maxParts = Math.min(Number(ctx.query['max-parts'] ?? 1000) || 1000, 1000);
        const after = numbers.filter((n) => n > marker);
        const page = after.slice(0, maxParts);
        const parts = await Promise.all(
          page.map(async (n) => {
            const [st, md5] = await Promise.all([
              stat(path.join(dir, String(n))),
              readFile(path.join(dir, `${n}.md5`)).then(String),
            ]);
            return { PartNumber: n, LastModified: st.mtime.toISOString(), ETag: `"${md5}"`, Size: st.size };
          }),
        );
        const truncated = after.length > page.length;
        ctx.body = {
          ListPartsResult: {
            '@': { xmlns: 'http://s3.amazonaws.com/doc/2006-03-01/' },
            Bucket: bucket,
            Key: key,
            UploadId: uploadId,
            PartNumberMarker: marker,
            NextPartNumberMarker: page.length ? page[page.length - 1] : marker,
            MaxParts: maxParts,
            IsTruncated: truncated,
            StorageClass: 'STANDARD',
            Part: parts,
          },
        };
      }),
    );
  };
}

async function startS3(): Promise<S3rverInstance> {
  const endpoint = new URL(need('S3_ENDPOINT'));
  const port = Number(endpoint.port || 80);
  const directory = path.resolve(need('LOBELINE_DATA_DIR'), 's3');
  mkdirSync(directory, { recursive: true });
  const origin = need('APP_ORIGIN');
  const bucketNames = [need('S3_BUCKET_RAW'), need('S3_BUCKET_DERIVED'), need('S3_BUCKET_ARCHIVE')];

  // Replace s3rver's built-in key pair by ours, so only requests signed with our secret pass.
  const accounts = require('@20minutes/s3rver/lib/models/account') as {
    DUMMY_ACCOUNT: { createKeyPair(id: string, secret: string): void; revokeAccessKey(id: string): void };
  };
  accounts.DUMMY_ACCOUNT.revokeAccessKey('S3RVER');
  accounts.DUMMY_ACCOUNT.createKeyPair(need('S3_ACCESS_KEY_ID'), need('S3_SECRET_ACCESS_KEY'));

  // s3rver's list of storage classes predates GLACIER_IR (Glacier Instant Retrieval), Lobeline's default archive
  // class (lib/env.ts LOBELINE_ARCHIVE_STORAGE_CLASS): accept it too. The class is only recorded, never acted on.
  const objectModel = require('@20minutes/s3rver/lib/models/object') as { STORAGE_CLASSES: string[] };
  if (!objectModel.STORAGE_CLASSES.includes('GLACIER_IR')) objectModel.STORAGE_CLASSES.push('GLACIER_IR');

  const S3rver = require('@20minutes/s3rver') as S3rverCtor;
  const app = new S3rver({
    address: '127.0.0.1',
    port,
    directory,
    silent: true,
    vhostBuckets: false,
    allowMismatchedSignatures: false,
    configureBuckets: bucketNames.map((name) => ({ name, configs: [corsXml(origin)] })),
  });
  // Insert our extras just before s3rver's router (the last middleware registered by its constructor).
  app.middleware.splice(app.middleware.length - 1, 0, multipartExtras(app));
  const address = await app.run();
  say('s3 listening', { address: `${address.address}:${address.port}`, directory, buckets: bucketNames, origin });
  return app;
}

// ---------- SMTP catcher ----------

function addressList(value: unknown): string[] {
  const list = Array.isArray(value) ? value : value ? [value] : [];
  return list.flatMap((a: { value?: { address?: string }[] }) => (a.value ?? []).map((v) => v.address ?? ''));
}

async function startSmtp(): Promise<SMTPServer> {
  const port = Number(need('SMTP_PORT'));
  const dir = path.resolve(need('MAIL_CATCHER_DIR'));
  mkdirSync(dir, { recursive: true });
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ['STARTTLS'],
    logger: false,
    size: 25 * 1024 * 1024,
    onData(stream, session, callback) {
      simpleParser(stream)
        .then(async (mail) => {
          const envelopeTo = session.envelope.rcptTo.map((r) => r.address);
          const headerTo = [...addressList(mail.to), ...addressList(mail.cc)];
          const mailFrom = session.envelope.mailFrom;
          const message = {
            id: `${Date.now().toString(36)}-${randomBytes(6).toString('hex')}`,
            date: new Date().toISOString(),
            from: mail.from?.text ?? (mailFrom ? mailFrom.address : ''),
            to: envelopeTo.length ? envelopeTo : headerTo,
            subject: mail.subject ?? '',
            text: mail.text ?? '',
            html: typeof mail.html === 'string' ? mail.html : '',
          };
          const file = path.join(dir, `${message.id}.json`);
          await writeFile(`${file}.part`, JSON.stringify(message, null, 2));
          await rename(`${file}.part`, file);
          say('mail caught', { id: message.id, to: message.to, subject: message.subject });
          callback();
        })
        .catch((err: Error) => {
          say('mail could not be stored', { error: err.message });
          callback(err);
        });
    },
  });
  server.on('error', (err) => say('smtp error', { error: err.message }));
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(port, '127.0.0.1', () => {
      server.off('error', reject);
      resolve();
    });
  });
  say('smtp catcher listening', { address: `127.0.0.1:${port}`, dir });
  return server;
}

// ---------- main ----------

async function main(): Promise<void> {
  const withS3 = process.env.LOBELINE_LOCAL_S3 !== '0';
  const s3 = withS3 ? await startS3() : undefined;
  const smtp = await startSmtp();
  let closing = false;
  const shutdown = (signal: string) => {
    if (closing) return;
    closing = true;
    say('stopping', { signal });
    const timer = setTimeout(() => process.exit(0), 5000);
    timer.unref();
    Promise.allSettled([s3?.close(), new Promise<void>((resolve) => smtp.close(() => resolve()))]).then(() => {
      say('stopped');
      process.exit(0);
    });
  };
  process.on('SIGTERM', () => shutdown('SIGTERM'));
  process.on('SIGINT', () => shutdown('SIGINT'));
}

main().catch((err: Error) => {
  say('local services failed to start', { error: err.message, stack: err.stack });
  process.exit(1);
});
