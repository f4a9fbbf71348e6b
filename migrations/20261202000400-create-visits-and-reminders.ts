import { DataTypes, type QueryInterface } from 'sequelize';

/** Scheduled visits per participant (target date and window from day 0 = repair) and the reminder sent-log. */
export async function up({ context: qi }: { context: QueryInterface }) {
  await qi.createTable('visits', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    study_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'studies', key: 'id' } },
    site_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'sites', key: 'id' } },
    participant_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'participants', key: 'id' } },
    visit_key: { type: DataTypes.STRING(40), allowNull: false },
    label: { type: DataTypes.STRING(100), allowNull: false },
    day0: { type: DataTypes.DATEONLY, allowNull: false },
    target: { type: DataTypes.DATEONLY, allowNull: false },
    earliest: { type: DataTypes.DATEONLY, allowNull: false },
    latest: { type: DataTypes.DATEONLY, allowNull: false },
    blinded: { type: DataTypes.BOOLEAN, allowNull: false },
    required: { type: DataTypes.BOOLEAN, allowNull: false },
    forms: { type: DataTypes.JSON, allowNull: false },
    completed_on: { type: DataTypes.DATEONLY, allowNull: true },
    created_at: { type: DataTypes.DATE(3), allowNull: false },
    updated_at: { type: DataTypes.DATE(3), allowNull: false },
  });
  await qi.addIndex('visits', ['participant_id', 'visit_key'], { unique: true, name: 'visits_participant_key' });
  await qi.addIndex('visits', ['study_id', 'site_id', 'latest'], { name: 'visits_site_latest' });
  await qi.createTable('reminder_log', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    visit_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'visits', key: 'id' } },
    kind: { type: DataTypes.STRING(20), allowNull: false },
    recipients: { type: DataTypes.JSON, allowNull: false },
    sent_at: { type: DataTypes.DATE(3), allowNull: false },
  });
  await qi.addIndex('reminder_log', ['visit_id', 'kind'], { unique: true, name: 'reminder_log_visit_kind' });
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.dropTable('reminder_log');
  await qi.dropTable('visits');
}
