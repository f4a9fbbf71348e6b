import 'server-only';
import { sequelize } from '@/models';

/** Answers when MariaDB does; throws (mapped to 503) when it does not. */
export async function checkDatabase(): Promise<void> {
  await sequelize.query('SELECT 1');
}
