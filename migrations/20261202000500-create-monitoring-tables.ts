import { DataTypes, type QueryInterface } from 'sequelize';

/** Data queries with their messages, source data verification marks, electronic signatures, SAE clocks. */
export async function up({ context: qi }: { context: QueryInterface }) {
  const ts = { created_at: { type: DataTypes.DATE(3), allowNull: false }, updated_at: { type: DataTypes.DATE(3), allowNull: false } };
  await qi.createTable('queries', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    study_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'studies', key: 'id' } },
    site_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'sites', key: 'id' } },
    participant_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'participants', key: 'id' } },
    record_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'crf_records', key: 'id' } },
    form_key: { type: DataTypes.STRING(60), allowNull: false },
    item_path: { type: DataTypes.STRING(500), allowNull: false },
    state: { type: DataTypes.STRING(12), allowNull: false },
    source: { type: DataTypes.STRING(12), allowNull: false },
    rule_id: { type: DataTypes.STRING(80), allowNull: true },
    message: { type: DataTypes.STRING(2000), allowNull: false },
    opened_by: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    closed_at: { type: DataTypes.DATE(3), allowNull: true },
    ...ts,
  });
  await qi.addIndex('queries', ['study_id', 'site_id', 'state'], { name: 'queries_site_state' });
  await qi.addIndex('queries', ['record_id', 'item_path'], { name: 'queries_item' });
  await qi.createTable('query_messages', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    query_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'queries', key: 'id' } },
    user_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    role: { type: DataTypes.STRING(32), allowNull: false },
    kind: { type: DataTypes.STRING(12), allowNull: false },
    text: { type: DataTypes.STRING(2000), allowNull: false },
    created_at: { type: DataTypes.DATE(3), allowNull: false },
  });
  await qi.createTable('verifications', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    record_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'crf_records', key: 'id' } },
    item_path: { type: DataTypes.STRING(500), allowNull: false },
    verified_by: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    verified_at: { type: DataTypes.DATE(3), allowNull: false },
    cleared_at: { type: DataTypes.DATE(3), allowNull: true },
    cleared_reason: { type: DataTypes.STRING(500), allowNull: true },
  });
  await qi.addIndex('verifications', ['record_id', 'cleared_at'], { name: 'verifications_record' });
  await qi.createTable('signatures', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    study_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    site_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    participant_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'participants', key: 'id' } },
    signer_user_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    signer_name: { type: DataTypes.STRING(200), allowNull: false },
    meaning: { type: DataTypes.STRING(300), allowNull: false },
    signed_at: { type: DataTypes.DATE(3), allowNull: false },
    content_hash: { type: DataTypes.CHAR(64), allowNull: false },
    status: { type: DataTypes.STRING(12), allowNull: false },
    invalidated_at: { type: DataTypes.DATE(3), allowNull: true },
    invalidated_reason: { type: DataTypes.STRING(500), allowNull: true },
  });
  await qi.createTable('sae_reports', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    study_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    site_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    participant_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    record_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, unique: true, references: { model: 'crf_records', key: 'id' } },
    aware_at: { type: DataTypes.DATE(3), allowNull: false },
    deadline_at: { type: DataTypes.DATE(3), allowNull: false },
    followed_up_at: { type: DataTypes.DATE(3), allowNull: true },
    ...ts,
  });
}

export async function down({ context: qi }: { context: QueryInterface }) {
  for (const t of ['sae_reports', 'signatures', 'verifications', 'query_messages', 'queries']) await qi.dropTable(t);
}
