// Publishes every form in forms/ (once per key and version) and pins studies that do not yet use a form
// to its newest version. A definition that does not compile, or a changed published version, stops the start.
import { readAllForms, publishDefinition, pinForm } from '../lib/crf/definitions';
import { FormDefinition, StudyForm, Study, sequelize } from '../models';

async function main() {
  const forms = readAllForms();
  let published = 0;
  for (const f of forms) if ((await publishDefinition(f)) === 'published') published++;
  let pinned = 0;
  for (const study of await Study.findAll()) {
    for (const f of forms) {
      if (await StudyForm.findOne({ where: { studyId: study.id, formKey: f.key } })) continue;
      const newest = await FormDefinition.max<number, FormDefinition>('version', { where: { formKey: f.key } });
      await pinForm(study.id, f.key, newest, { userId: null, role: 'system' });
      pinned++;
    }
  }
  console.log(`[excursion] forms: ${forms.length} in forms/, ${published} newly published, ${pinned} pins added`);
  await sequelize.close();
}

main().catch((e) => {
  console.error(`[excursion] ${e instanceof Error ? e.message : String(e)}`);
  process.exit(1);
});
