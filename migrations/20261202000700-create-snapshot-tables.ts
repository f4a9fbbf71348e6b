import { DataTypes, type QueryInterface } from 'sequelize';

/**
 * Immutable dataset snapshots: one row per snapshot written to object storage, inserted only after every file
 * and the manifest are stored (so an interrupted export never lists a partial snapshot). Append-only.
 */
export async function up({ context: qi }: { context: QueryInterface }) {
  await qi.createTable('snapshots', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    study_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'studies', key: 'id' } },
    created_at: { type: DataTypes.DATE(3), allowNull: false },
    created_by: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    storage_prefix: { type: DataTypes.STRING(300), allowNull: false, unique: true },
    manifest_hash: { type: DataTypes.CHAR(64), allowNull: false },
    counts: { type: DataTypes.JSON, allowNull: false },
    commitment_result: { type: DataTypes.JSON, allowNull: false },
  });
  await qi.addIndex('snapshots', ['study_id', 'id'], { name: 'snapshots_study' });
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.dropTable('snapshots');
}
