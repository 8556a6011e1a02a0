// tsx scripts/migrate.ts [up|down|status] [--to NAME] [--dir DIR]
//   up      apply every pending migration (default)
//   down    revert the last applied migration (or back to and including --to NAME; `--to 0` reverts all)
//   status  list applied and pending migrations
// Reads `.env` from the repo root for variables not already set (skipped when LOBELINE_INSTANCE=test).
import { existsSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { parseArgs, parseEnv as parseDotEnv } from 'node:util';
import { closeSequelize } from '@/lib/db/client';
import { getMigrator, REPO_ROOT } from '@/lib/db/migrator';
import { EnvError, getEnv } from '@/lib/env';

function loadDotEnv(): void {
  if (process.env.LOBELINE_INSTANCE === 'test') return;
  const file = path.join(REPO_ROOT, '.env');
  if (!existsSync(file)) return;
  for (const [k, v] of Object.entries(parseDotEnv(readFileSync(file, 'utf8')))) {
    if (process.env[k] === undefined) process.env[k] = v;
  }
}

async function main(): Promise<number> {
  const { positionals, values } = parseArgs({
    allowPositionals: true,
    options: { to: { type: 'string' }, dir: { type: 'string' } },
  });
  const command = positionals[0] ?? 'up';
  if (!['up', 'down', 'status'].includes(command)) {
    console.error(`Unknown command "${command}". Use: up | down [--to NAME|0] | status`);
    return 2;
  }
  loadDotEnv();
  const env = getEnv();
  const migrator = getMigrator({ dir: values.dir ? path.resolve(values.dir) : undefined });
  const where = `${env.DB_NAME} on ${env.DB_HOST}:${env.DB_PORT}`;
  if (command === 'up') {
    const done = await migrator.up();
    console.log(
      done.length
        ? `Applied ${done.length} migration(s) to ${where}: ${done.map((m) => m.name).join(', ')}`
        : `Schema of ${where} is up to date.`,
    );
  } else if (command === 'down') {
    const to = values.to === '0' ? 0 : values.to;
    const undone = to === undefined ? await migrator.down() : await migrator.down({ to });
    console.log(undone.length ? `Reverted: ${undone.map((m) => m.name).join(', ')}` : 'Nothing to revert.');
  } else {
    const [executed, pending] = await Promise.all([migrator.executed(), migrator.pending()]);
    console.log(`Migrations of ${where}:`);
    for (const m of executed) console.log(`  applied  ${m.name}`);
    for (const m of pending) console.log(`  pending  ${m.name}`);
    if (!executed.length && !pending.length) console.log('  (none found)');
  }
  return 0;
}

main()
  .then(async (code) => {
    await closeSequelize();
    process.exit(code);
  })
  .catch(async (err: unknown) => {
    if (err instanceof EnvError) console.error(err.message);
    else {
      const e = err as Error & { cause?: unknown };
      console.error(`Migration failed: ${e?.message ?? String(err)}`);
      if (e?.cause) console.error(`  caused by: ${(e.cause as Error)?.message ?? String(e.cause)}`);
    }
    await closeSequelize().catch(() => undefined);
    process.exit(1);
  });
