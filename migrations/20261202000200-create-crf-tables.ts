import { DataTypes, type QueryInterface } from 'sequelize';

/** Form definitions (versioned), the versions each study pins, participants, CRF records; form version on audit rows. */
export async function up({ context: qi }: { context: QueryInterface }) {
  await qi.createTable('form_definitions', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    form_key: { type: DataTypes.STRING(60), allowNull: false },
    version: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    title: { type: DataTypes.STRING(200), allowNull: false },
    access: { type: DataTypes.STRING(20), allowNull: false },
    schema_json: { type: DataTypes.JSON, allowNull: false },
    ui_json: { type: DataTypes.JSON, allowNull: false },
    rules_json: { type: DataTypes.JSON, allowNull: false },
    content_hash: { type: DataTypes.CHAR(64), allowNull: false },
    created_at: { type: DataTypes.DATE(3), allowNull: false },
  });
  await qi.addIndex('form_definitions', ['form_key', 'version'], { unique: true, name: 'form_definitions_key_version' });
  await qi.createTable('study_forms', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    study_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'studies', key: 'id' } },
    form_key: { type: DataTypes.STRING(60), allowNull: false },
    version: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    created_at: { type: DataTypes.DATE(3), allowNull: false },
    updated_at: { type: DataTypes.DATE(3), allowNull: false },
  });
  await qi.addIndex('study_forms', ['study_id', 'form_key'], { unique: true, name: 'study_forms_study_key' });
  await qi.createTable('participants', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    study_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'studies', key: 'id' } },
    site_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'sites', key: 'id' } },
    screening_number: { type: DataTypes.STRING(40), allowNull: false },
    subject_code: { type: DataTypes.STRING(40), allowNull: true, unique: true },
    status: { type: DataTypes.STRING(30), allowNull: false, defaultValue: 'screening' },
    created_by: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    created_at: { type: DataTypes.DATE(3), allowNull: false },
    updated_at: { type: DataTypes.DATE(3), allowNull: false },
  });
  await qi.addIndex('participants', ['study_id', 'site_id', 'screening_number'], { unique: true, name: 'participants_screening' });
  await qi.createTable('crf_records', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
    study_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'studies', key: 'id' } },
    site_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'sites', key: 'id' } },
    participant_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'participants', key: 'id' } },
    form_key: { type: DataTypes.STRING(60), allowNull: false },
    form_version: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    visit_key: { type: DataTypes.STRING(40), allowNull: false, defaultValue: '' },
    instance: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 1 },
    status: { type: DataTypes.STRING(20), allowNull: false },
    data: { type: DataTypes.JSON, allowNull: false },
    derived: { type: DataTypes.JSON, allowNull: false },
    review: { type: DataTypes.JSON, allowNull: false },
    lock_version: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 1 },
    created_by: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    updated_by: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    submitted_at: { type: DataTypes.DATE(3), allowNull: true },
    void_reason: { type: DataTypes.STRING(500), allowNull: true },
    created_at: { type: DataTypes.DATE(3), allowNull: false },
    updated_at: { type: DataTypes.DATE(3), allowNull: false },
  });
  await qi.addIndex('crf_records', ['participant_id', 'form_key', 'visit_key', 'instance'], { unique: true, name: 'crf_records_slot' });
  await qi.addIndex('crf_records', ['study_id', 'site_id', 'form_key'], { name: 'crf_records_study_site_form' });
  await qi.addColumn('audit_events', 'form_version', { type: DataTypes.INTEGER.UNSIGNED, allowNull: true });
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.removeColumn('audit_events', 'form_version');
  for (const t of ['crf_records', 'participants', 'study_forms', 'form_definitions']) await qi.dropTable(t);
}
