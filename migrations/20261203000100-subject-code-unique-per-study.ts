import type { QueryInterface } from 'sequelize';

/**
 * A study ID (subject code) is unique within its study, not across every study on the server: two studies that use
 * the same prefix and site code may both have their own "…-AAA-001". The composite index is added before the single
 * one is removed, so there is never a moment without the guarantee; rows already stored satisfy both.
 */
export async function up({ context: qi }: { context: QueryInterface }) {
  await qi.addIndex('participants', ['study_id', 'subject_code'], { unique: true, name: 'participants_study_subject_code' });
  await qi.removeIndex('participants', 'subject_code');
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.addIndex('participants', ['subject_code'], { unique: true, name: 'subject_code' });
  await qi.removeIndex('participants', 'participants_study_subject_code');
}
