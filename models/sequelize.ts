import { Sequelize } from 'sequelize';
import * as mariadb from 'mariadb';

type Cache = { __excursionSequelize?: Sequelize };
const g = globalThis as unknown as Cache;

/** Options for one connection pool; `user`/`password` default to the application user from the environment. */
export function createSequelize(opts: { user?: string; password?: string; pool?: number } = {}): Sequelize {
  const user = opts.user ?? process.env.DB_USER;
  if (!user) throw new Error('The environment variable DB_USER is not set.');
  return new Sequelize(process.env.DB_NAME ?? 'excursion', user, opts.password ?? process.env.DB_PASSWORD ?? '', {
    dialect: 'mariadb',
    // Passed explicitly so bundlers never have to resolve the dialect by name.
    dialectModule: mariadb,
    host: process.env.DB_HOST ?? '127.0.0.1',
    port: Number(process.env.DB_PORT ?? 3307),
    timezone: '+00:00',
    logging: false,
    benchmark: false,
    pool: { max: opts.pool ?? 20, min: 0, acquire: 8000, idle: 10_000, evict: 5000 },
    dialectOptions: { connectTimeout: 4000, socketTimeout: 20_000, allowPublicKeyRetrieval: false },
    define: { underscored: true, freezeTableName: true },
  });
}

/** The one Sequelize instance of this process (cached on globalThis so dev reloads reuse it). */
export function getSequelize(): Sequelize {
  if (!g.__excursionSequelize) g.__excursionSequelize = createSequelize();
  return g.__excursionSequelize;
}
