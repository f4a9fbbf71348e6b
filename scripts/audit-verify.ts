// Walks the audit chain and reports the first broken row (npm run audit:verify). Exit 1 when broken.
import { sequelize } from '../models';
import { verifyAuditChain } from '../lib/audit';

async function main() {
  const r = await verifyAuditChain(sequelize);
  if (r.ok) console.log(`[excursion] audit chain verified: ${r.checked} rows, no break.`);
  else console.error(`[excursion] audit chain BROKEN at row ${r.firstBroken!.id}: ${r.firstBroken!.problem} (${r.checked} rows verified before it).`);
  await sequelize.close();
  process.exit(r.ok ? 0 : 1);
}
main().catch((e) => {
  console.error(e);
  process.exit(1);
});
