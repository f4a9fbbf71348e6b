import { DataTypes, type QueryInterface } from 'sequelize';

/** Screening log columns, uploads, randomisation set-up, the allocation schedule, allocations and unblinding events. */
export async function up({ context: qi }: { context: QueryInterface }) {
  await qi.addColumn('participants', 'screening_date', { type: DataTypes.DATEONLY, allowNull: true });
  await qi.addColumn('participants', 'age', { type: DataTypes.TINYINT.UNSIGNED, allowNull: true });
  await qi.addColumn('participants', 'sex', { type: DataTypes.STRING(1), allowNull: true });
  await qi.addColumn('participants', 'screening_outcome', { type: DataTypes.STRING(20), allowNull: false, defaultValue: 'pending' });
  await qi.addColumn('participants', 'screening_reasons', { type: DataTypes.JSON, allowNull: true });
  await qi.addColumn('participants', 'unblinded_at', { type: DataTypes.DATE(3), allowNull: true });
  await qi.addIndex('participants', ['study_id', 'site_id', 'screening_outcome'], { name: 'participants_outcome' });
  await qi.createTable('uploads', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    public_id: { type: DataTypes.STRING(40), allowNull: false, unique: true },
    study_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'studies', key: 'id' } },
    site_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'sites', key: 'id' } },
    participant_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'participants', key: 'id' } },
    purpose: { type: DataTypes.STRING(30), allowNull: false },
    object_key: { type: DataTypes.STRING(300), allowNull: false },
    sha256: { type: DataTypes.CHAR(64), allowNull: false },
    size_bytes: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    mime: { type: DataTypes.STRING(60), allowNull: false },
    uploaded_by: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    created_at: { type: DataTypes.DATE(3), allowNull: false },
  });
  await qi.createTable('randomisation_setups', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    study_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, unique: true, references: { model: 'studies', key: 'id' } },
    algorithm_version: { type: DataTypes.STRING(40), allowNull: false },
    seed: { type: DataTypes.STRING(128), allowNull: false },
    commitment: { type: DataTypes.CHAR(64), allowNull: false },
    per_stratum: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    activated_by: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    activated_at: { type: DataTypes.DATE(3), allowNull: false },
  });
  await qi.createTable('allocation_slots', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    study_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'studies', key: 'id' } },
    stratum: { type: DataTypes.STRING(120), allowNull: false },
    slot: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    arm: { type: DataTypes.STRING(20), allowNull: false },
    block: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    block_size: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    participant_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true, unique: true },
    used_at: { type: DataTypes.DATE(3), allowNull: true },
  });
  await qi.addIndex('allocation_slots', ['study_id', 'stratum', 'slot'], { unique: true, name: 'allocation_slots_stratum_slot' });
  await qi.createTable('allocations', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    study_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'studies', key: 'id' } },
    site_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'sites', key: 'id' } },
    participant_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, unique: true, references: { model: 'participants', key: 'id' } },
    slot_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, unique: true, references: { model: 'allocation_slots', key: 'id' } },
    stratum: { type: DataTypes.STRING(120), allowNull: false },
    arm: { type: DataTypes.STRING(20), allowNull: false },
    allocated_by: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    allocated_at: { type: DataTypes.DATE(3), allowNull: false },
  });
  await qi.createTable('unblinding_events', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    study_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    site_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    participant_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    user_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    role: { type: DataTypes.STRING(32), allowNull: false },
    reason: { type: DataTypes.STRING(1000), allowNull: false },
    at: { type: DataTypes.DATE(3), allowNull: false },
  });
}

export async function down({ context: qi }: { context: QueryInterface }) {
  for (const t of ['unblinding_events', 'allocations', 'allocation_slots', 'randomisation_setups', 'uploads']) await qi.dropTable(t);
  await qi.removeIndex('participants', 'participants_outcome');
  for (const c of ['unblinded_at', 'screening_reasons', 'screening_outcome', 'sex', 'age', 'screening_date']) await qi.removeColumn('participants', c);
}
