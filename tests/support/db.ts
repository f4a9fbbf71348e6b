// Database access for tests: the application's own user (same grants as the app) and a privileged
// connection (the migration user) for what only a test may do, such as tampering with audit rows.
import { QueryTypes, type Sequelize } from 'sequelize';
import { createSequelize } from '@/models/sequelize';

let priv: Sequelize | null = null;
export function privDb(): Sequelize {
  priv ??= createSequelize({ user: process.env.DB_PRIV_USER, password: process.env.DB_PRIV_PASSWORD, pool: 2 });
  return priv;
}

export async function count(db: Sequelize, table: string, where = '1=1', replacements: unknown[] = []): Promise<number> {
  const [r] = await db.query<{ n: number | string }>(`SELECT COUNT(*) AS n FROM \`${table}\` WHERE ${where}`, { type: QueryTypes.SELECT, replacements });
  return Number(r.n);
}

export async function rows<T extends object = Record<string, unknown>>(db: Sequelize, sql: string, replacements: unknown[] = []): Promise<T[]> {
  return db.query<T>(sql, { type: QueryTypes.SELECT, replacements });
}
