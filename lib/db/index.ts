// The database entry point for server code: the one Sequelize instance with Lobeline's models attached.
import type { Sequelize } from 'sequelize';
import { initModels } from '@/models';
import { getSequelize } from './client';

/** The Sequelize instance with every model initialised (idempotent). */
export function getDb(): Sequelize {
  const sequelize = getSequelize();
  initModels(sequelize);
  return sequelize;
}

export { closeSequelize } from './client';
