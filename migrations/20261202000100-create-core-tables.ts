import { DataTypes, type QueryInterface } from 'sequelize';

const ROLES = ['admin', 'data_manager', 'coordinator', 'therapist', 'assessor', 'investigator', 'monitor', 'statistician'];
const ts = () => ({
  created_at: { type: DataTypes.DATE(3), allowNull: false },
  updated_at: { type: DataTypes.DATE(3), allowNull: false },
});

/** Users, studies, sites, memberships, invitations, the audit trail with its chain head, and the access log. */
export async function up({ context: qi }: { context: QueryInterface }) {
  await qi.createTable('users', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    email: { type: DataTypes.STRING(254), allowNull: false, unique: true },
    name: { type: DataTypes.STRING(200), allowNull: false },
    password_hash: { type: DataTypes.STRING(100), allowNull: true },
    status: { type: DataTypes.ENUM('invited', 'active', 'deactivated'), allowNull: false, defaultValue: 'invited' },
    failed_attempts: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 0 },
    locked_until: { type: DataTypes.DATE(3), allowNull: true },
    last_login_at: { type: DataTypes.DATE(3), allowNull: true },
    ...ts(),
  });
  await qi.createTable('studies', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    code: { type: DataTypes.STRING(40), allowNull: false, unique: true },
    title: { type: DataTypes.STRING(300), allowNull: false },
    status: { type: DataTypes.ENUM('setup', 'recruiting', 'follow_up', 'closed'), allowNull: false, defaultValue: 'setup' },
    config: { type: DataTypes.JSON, allowNull: false },
    ...ts(),
  });
  await qi.createTable('sites', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    study_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'studies', key: 'id' } },
    code: { type: DataTypes.STRING(10), allowNull: false },
    name: { type: DataTypes.STRING(200), allowNull: false },
    time_zone: { type: DataTypes.STRING(64), allowNull: false },
    recruitment_target: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 0 },
    active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
    ...ts(),
  });
  await qi.addIndex('sites', ['study_id', 'code'], { unique: true, name: 'sites_study_code' });
  await qi.createTable('memberships', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    user_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'users', key: 'id' } },
    study_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'studies', key: 'id' } },
    site_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true, references: { model: 'sites', key: 'id' } },
    role: { type: DataTypes.ENUM(...ROLES), allowNull: false },
    revoked_at: { type: DataTypes.DATE(3), allowNull: true },
    ...ts(),
  });
  await qi.addIndex('memberships', ['user_id', 'revoked_at'], { name: 'memberships_user_active' });
  await qi.createTable('invitations', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    user_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'users', key: 'id' } },
    membership_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true, references: { model: 'memberships', key: 'id' } },
    token_hash: { type: DataTypes.CHAR(64), allowNull: false, unique: true },
    expires_at: { type: DataTypes.DATE(3), allowNull: false },
    used_at: { type: DataTypes.DATE(3), allowNull: true },
    invited_by_user_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true, references: { model: 'users', key: 'id' } },
    ...ts(),
  });
  // The audit trail: one row per changed item, chained by SHA-256 (hash = SHA-256(prev_hash + canonical row)).
  await qi.createTable('audit_events', {
    id: { type: DataTypes.BIGINT.UNSIGNED, autoIncrement: true, primaryKey: true },
    at: { type: DataTypes.DATE(6), allowNull: false },
    actor_user_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    actor_role: { type: DataTypes.STRING(32), allowNull: true },
    study_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    site_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    entity_type: { type: DataTypes.STRING(40), allowNull: false },
    entity_id: { type: DataTypes.STRING(64), allowNull: false },
    action: { type: DataTypes.STRING(40), allowNull: false },
    item_path: { type: DataTypes.STRING(500), allowNull: true },
    old_value: { type: DataTypes.TEXT('medium'), allowNull: true },
    new_value: { type: DataTypes.TEXT('medium'), allowNull: true },
    reason: { type: DataTypes.STRING(1000), allowNull: true },
    request_id: { type: DataTypes.STRING(64), allowNull: true },
    prev_hash: { type: DataTypes.CHAR(64), allowNull: false },
    hash: { type: DataTypes.CHAR(64), allowNull: false, unique: true },
  });
  await qi.addIndex('audit_events', ['entity_type', 'entity_id'], { name: 'audit_entity' });
  await qi.addIndex('audit_events', ['study_id', 'site_id', 'at'], { name: 'audit_study_site_at' });
  // A single row holding the newest hash; audited transactions lock it, which keeps the chain linear.
  await qi.createTable('audit_chain_head', {
    id: { type: DataTypes.TINYINT.UNSIGNED, primaryKey: true },
    last_id: { type: DataTypes.BIGINT.UNSIGNED, allowNull: true },
    hash: { type: DataTypes.CHAR(64), allowNull: false },
  });
  await qi.bulkInsert('audit_chain_head', [{ id: 1, last_id: null, hash: '0'.repeat(64) }]);
  await qi.createTable('access_log', {
    id: { type: DataTypes.BIGINT.UNSIGNED, autoIncrement: true, primaryKey: true },
    at: { type: DataTypes.DATE(6), allowNull: false },
    user_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    email: { type: DataTypes.STRING(254), allowNull: true },
    event: { type: DataTypes.STRING(40), allowNull: false },
    ip: { type: DataTypes.STRING(64), allowNull: true },
    user_agent: { type: DataTypes.STRING(300), allowNull: true },
    request_id: { type: DataTypes.STRING(64), allowNull: true },
    detail: { type: DataTypes.JSON, allowNull: true },
  });
  await qi.addIndex('access_log', ['user_id', 'at'], { name: 'access_log_user_at' });
  await qi.addIndex('access_log', ['event', 'at'], { name: 'access_log_event_at' });
}

export async function down({ context: qi }: { context: QueryInterface }) {
  for (const t of ['access_log', 'audit_chain_head', 'audit_events', 'invitations', 'memberships', 'sites', 'studies', 'users']) {
    await qi.dropTable(t);
  }
}
