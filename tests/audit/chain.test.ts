// The audit chain: each row's hash covers its content and the previous row's hash; the verifier
// passes on a clean chain and names the row that a privileged connection altered.
import { describe, it, expect, afterAll } from 'vitest';
import { QueryTypes } from 'sequelize';
import { sequelize } from '@/models';
import { appendAudit, verifyAuditChain } from '@/lib/audit';
import { privDb } from '../support/db';

describe('audit chain', () => {
  let tamperedId = 0;
  let original = '';
  afterAll(async () => {
    if (tamperedId) await privDb().query('UPDATE audit_events SET new_value = ? WHERE id = ?', { replacements: [original, tamperedId] });
  });

  it('appends rows with server time in microseconds and links them', async () => {
    await sequelize.transaction((t) =>
      appendAudit(t, [
        { actorUserId: null, actorRole: 'system', entityType: 'test', entityId: 'a', action: 'create', newValue: { v: 1 } },
        { actorUserId: null, actorRole: 'system', entityType: 'test', entityId: 'a', action: 'update', itemPath: '/v', oldValue: 1, newValue: 2, reason: 'check' },
      ]),
    );
    const rows = await sequelize.query<{ id: number; at: string; prev_hash: string; hash: string }>(
      "SELECT id, DATE_FORMAT(at, '%Y-%m-%d %H:%i:%s.%f') AS at, prev_hash, hash FROM audit_events WHERE entity_type = 'test' ORDER BY id DESC LIMIT 2",
      { type: QueryTypes.SELECT },
    );
    expect(rows[0].prev_hash).toBe(rows[1].hash);
    expect(rows[0].at).toMatch(/^\d{4}-\d\d-\d\d \d\d:\d\d:\d\d\.\d{6}$/);
    expect((await verifyAuditChain(sequelize)).ok).toBe(true);
  });

  it('a rolled-back transaction leaves no audit rows and the chain intact', async () => {
    const before = (await verifyAuditChain(sequelize)).checked;
    await expect(
      sequelize.transaction(async (t) => {
        await appendAudit(t, [{ actorUserId: null, actorRole: 'system', entityType: 'test', entityId: 'b', action: 'create', newValue: 1 }]);
        throw new Error('injected failure');
      }),
    ).rejects.toThrow('injected failure');
    const r = await verifyAuditChain(sequelize);
    expect(r).toEqual({ ok: true, checked: before });
  });

  it('finds the row altered through a privileged connection', async () => {
    const [row] = await sequelize.query<{ id: number; new_value: string }>("SELECT id, new_value FROM audit_events WHERE entity_type = 'test' ORDER BY id LIMIT 1", { type: QueryTypes.SELECT });
    tamperedId = Number(row.id);
    original = row.new_value;
    await privDb().query('UPDATE audit_events SET new_value = ? WHERE id = ?', { replacements: ['{"v":999}', tamperedId] });
    const r = await verifyAuditChain(sequelize);
    expect(r.ok).toBe(false);
    expect(r.firstBroken!.id).toBe(tamperedId);
    expect(r.firstBroken!.problem).toMatch(/altered/);
  });
});
