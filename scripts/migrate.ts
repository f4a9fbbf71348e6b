// Runs the migrations in migrations/ with umzug, as the migration database user.
// Usage: tsx scripts/migrate.ts up|status|down
import path from 'node:path';
import { Umzug, SequelizeStorage } from 'umzug';
import { createSequelize } from '../models/sequelize';

async function main() {
  const cmd = process.argv[2] ?? 'up';
  const sequelize = createSequelize({ pool: 2 });
  const umzug = new Umzug({
    migrations: {
      glob: ['migrations/*.ts', { cwd: path.resolve(__dirname, '..') }],
      resolve: ({ name, path: p, context }) => ({
        name,
        up: async () => (await import(p!)).up({ context }),
        down: async () => (await import(p!)).down({ context }),
      }),
    },
    context: sequelize.getQueryInterface(),
    storage: new SequelizeStorage({ sequelize }),
    logger: undefined,
  });
  if (cmd === 'up') {
    const done = await umzug.up();
    console.log(`[excursion] migrations: ${done.length} applied${done.length ? ` (${done.map((m) => m.name).join(', ')})` : ''}`);
  } else if (cmd === 'status') {
    const executed = await umzug.executed();
    const pending = await umzug.pending();
    for (const m of executed) console.log(`  applied  ${m.name}`);
    for (const m of pending) console.log(`  pending  ${m.name}`);
    console.log(`[excursion] ${executed.length} applied, ${pending.length} pending`);
  } else if (cmd === 'down') {
    await umzug.down();
  } else {
    throw new Error(`unknown command ${cmd}`);
  }
  await sequelize.close();
}

main().catch((e) => {
  console.error(e);
  process.exit(1);
});
