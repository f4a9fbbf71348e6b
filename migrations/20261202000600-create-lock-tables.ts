import { DataTypes, type QueryInterface } from 'sequelize';

/**
 * Database lock: the current lock level of a study (site_id null) or of one site, the unlock requests that
 * wait for a second data manager, and the append-only history of every lock event.
 */
export async function up({ context: qi }: { context: QueryInterface }) {
  await qi.createTable('lock_states', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    study_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'studies', key: 'id' } },
    site_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true, references: { model: 'sites', key: 'id' } },
    level: { type: DataTypes.STRING(8), allowNull: false },
    since: { type: DataTypes.DATE(3), allowNull: false },
    changed_by: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    created_at: { type: DataTypes.DATE(3), allowNull: false },
    updated_at: { type: DataTypes.DATE(3), allowNull: false },
  });
  // One row per study and per site: NULL site ids would not collide in a plain unique index, so key on a persistent column.
  await qi.sequelize.query('ALTER TABLE lock_states ADD COLUMN scope_site_id INT UNSIGNED AS (IFNULL(site_id, 0)) PERSISTENT, ADD UNIQUE INDEX lock_states_scope (study_id, scope_site_id)');
  await qi.createTable('unlock_requests', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    study_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'studies', key: 'id' } },
    site_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true, references: { model: 'sites', key: 'id' } },
    from_level: { type: DataTypes.STRING(8), allowNull: false },
    to_level: { type: DataTypes.STRING(8), allowNull: false },
    reason: { type: DataTypes.STRING(500), allowNull: false },
    status: { type: DataTypes.STRING(12), allowNull: false },
    requested_by: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    requested_at: { type: DataTypes.DATE(3), allowNull: false },
    decided_by: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    decided_at: { type: DataTypes.DATE(3), allowNull: true },
  });
  await qi.addIndex('unlock_requests', ['study_id', 'status'], { name: 'unlock_requests_study_status' });
  await qi.createTable('lock_events', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    study_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'studies', key: 'id' } },
    site_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true, references: { model: 'sites', key: 'id' } },
    action: { type: DataTypes.STRING(20), allowNull: false },
    from_level: { type: DataTypes.STRING(8), allowNull: false },
    to_level: { type: DataTypes.STRING(8), allowNull: false },
    reason: { type: DataTypes.STRING(1000), allowNull: true },
    overridden: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
    blockers: { type: DataTypes.JSON, allowNull: true },
    unlock_request_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    actor_user_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    actor_role: { type: DataTypes.STRING(32), allowNull: false },
    at: { type: DataTypes.DATE(3), allowNull: false },
  });
  await qi.addIndex('lock_events', ['study_id', 'id'], { name: 'lock_events_study' });
}

export async function down({ context: qi }: { context: QueryInterface }) {
  for (const t of ['lock_events', 'unlock_requests', 'lock_states']) await qi.dropTable(t);
}
