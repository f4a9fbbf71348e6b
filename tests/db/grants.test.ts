// Least privilege, enforced by MariaDB itself: the application's database user may INSERT and SELECT
// audit and access-log rows but never UPDATE or DELETE them, and may not DROP, ALTER or GRANT.
import { describe, it, expect } from 'vitest';
import { QueryTypes } from 'sequelize';
import { sequelize } from '@/models';

const denied = /denied|command denied|1142|1044|1045/i;

describe('database grants of the application user', () => {
  it('can read and append audit rows', async () => {
    const [r] = await sequelize.query<{ n: number }>('SELECT COUNT(*) AS n FROM audit_events', { type: QueryTypes.SELECT });
    expect(Number(r.n)).toBeGreaterThan(0);
  });

  it('gets an error from MariaDB on UPDATE of an audit row', async () => {
    await expect(sequelize.query("UPDATE audit_events SET reason = 'tampered' ORDER BY id LIMIT 1")).rejects.toThrow(denied);
  });

  it('gets an error from MariaDB on DELETE of an audit row', async () => {
    await expect(sequelize.query('DELETE FROM audit_events ORDER BY id LIMIT 1')).rejects.toThrow(denied);
  });

  it('gets an error on UPDATE or DELETE of the access log', async () => {
    await expect(sequelize.query("UPDATE access_log SET event = 'x' LIMIT 1")).rejects.toThrow(denied);
    await expect(sequelize.query('DELETE FROM access_log LIMIT 1')).rejects.toThrow(denied);
  });

  it('cannot DROP, ALTER, CREATE or GRANT', async () => {
    await expect(sequelize.query('DROP TABLE audit_events')).rejects.toThrow(denied);
    await expect(sequelize.query('ALTER TABLE users ADD COLUMN x INT')).rejects.toThrow(denied);
    await expect(sequelize.query('CREATE TABLE sneaky (id INT)')).rejects.toThrow(denied);
    await expect(sequelize.query("GRANT SELECT ON excursion.users TO 'excursion_app'@'127.0.0.1'")).rejects.toThrow(denied);
  });

  it('shows exactly the grants the bootstrap gives', async () => {
    const rows = await sequelize.query<Record<string, string>>('SHOW GRANTS FOR CURRENT_USER()', { type: QueryTypes.SELECT });
    const text = rows.map((r) => Object.values(r)[0]).join('\n');
    expect(text).toMatch(/GRANT SELECT, INSERT ON `excursion`\.`audit_events`/);
    expect(text).not.toMatch(/ON `excursion`\.\*/);
    expect(text).not.toMatch(/WITH GRANT OPTION/);
  });
});
