// Schema migrations with umzug (the only schema path; never sync()). Each module in migrations/*.ts exports
// `up({ context: queryInterface })` and `down({ context: queryInterface })`. Run with tsx (scripts/migrate.ts).
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import type { QueryInterface, Sequelize } from 'sequelize';
import { SequelizeStorage, Umzug } from 'umzug';
import { getSequelize } from '@/lib/db/client';
import { log } from '@/lib/log';

export const REPO_ROOT = fileURLToPath(new URL('../..', import.meta.url));

type MigrationFn = (params: { context: QueryInterface; name: string; path?: string }) => Promise<unknown>;
interface MigrationModule {
  up?: MigrationFn;
  down?: MigrationFn;
}

export interface MigratorOptions {
  sequelize?: Sequelize;
  /** Folder holding the migrations (default: <repo>/migrations). */
  dir?: string;
  /** Name of the table recording applied migrations. */
  tableName?: string;
}

export function getMigrator(options: MigratorOptions = {}): Umzug<QueryInterface> {
  const sequelize = options.sequelize ?? getSequelize();
  const dir = options.dir ?? path.join(REPO_ROOT, 'migrations');
  const mlog = log.child({ surface: 'database', part: 'migrator' });
  return new Umzug<QueryInterface>({
    migrations: {
      glob: ['*.ts', { cwd: dir, ignore: ['*.d.ts', '*.test.ts'] }],
      resolve: ({ name, path: file, context }) => {
        const load = async (): Promise<MigrationModule> => import(pathToFileURL(file ?? '').href);
        return {
          name,
          path: file,
          up: async () => {
            const mod = await load();
            if (typeof mod.up !== 'function') throw new Error(`migration ${name} exports no up()`);
            return mod.up({ context, name, path: file });
          },
          down: async () => {
            const mod = await load();
            if (typeof mod.down !== 'function') throw new Error(`migration ${name} exports no down()`);
            return mod.down({ context, name, path: file });
          },
        };
      },
    },
    context: sequelize.getQueryInterface(),
    storage: new SequelizeStorage({ sequelize, tableName: options.tableName ?? 'schema_migrations' }),
    logger: {
      info: (m) => mlog.info('migration', m as Record<string, unknown>),
      warn: (m) => mlog.warn('migration', m as Record<string, unknown>),
      error: (m) => mlog.error('migration', m as Record<string, unknown>),
      debug: (m) => mlog.debug('migration', m as Record<string, unknown>),
    },
  });
}
