#!/usr/bin/env node
// Layering check: app/ and components/ never import models/ or Sequelize directly (they call lib/),
// and every lib/ module that touches the database or secrets starts with `import 'server-only'`.
import { readFileSync, readdirSync, statSync } from 'node:fs';
import path from 'node:path';

const root = path.resolve(path.dirname(new URL(import.meta.url).pathname), '..');
const files = (dir) =>
  readdirSync(path.join(root, dir)).flatMap((e) => {
    const p = path.join(dir, e);
    return statSync(path.join(root, p)).isDirectory() ? files(p) : /\.(ts|tsx)$/.test(e) ? [p] : [];
  });
const problems = [];
for (const f of [...files('app'), ...files('components')]) {
  const src = readFileSync(path.join(root, f), 'utf8');
  if (/from ['"](@\/models|\.\.?\/.*models)['"/]/.test(src) || /from ['"]sequelize['"]/.test(src)) problems.push(`${f}: imports models/ or sequelize; call a lib/ module instead`);
}
for (const f of files('lib')) {
  const src = readFileSync(path.join(root, f), 'utf8');
  const touchesDb = /from ['"]@\/models['"]/.test(src) || /process\.env\.(DB_|NEXTAUTH_SECRET|SMTP_PASS)/.test(src);
  if (touchesDb && !/^import 'server-only';/m.test(src)) problems.push(`${f}: touches the database or secrets without import 'server-only'`);
}
if (problems.length) {
  console.error(problems.join('\n'));
  process.exit(1);
}
console.log(`structure check: ${files('app').length + files('components').length + files('lib').length} files, no problems`);
