// Child process for tests/exports/interrupted-snapshot.test.ts: takes one snapshot of a study and exits.
// Run with tsx --conditions=react-server; the parent kills it while the snapshot's files are being stored.
import { createSnapshot } from '@/lib/snapshot';
import { sequelize } from '@/models';

const [studyId, userId] = process.argv.slice(2).map(Number);
createSnapshot({ studyId, actor: { userId, role: 'data_manager' } })
  .then((s) => console.log(`snapshot ${s.id} done`))
  .catch((e) => {
    console.error(e);
    process.exitCode = 1;
  })
  .finally(() => sequelize.close());
