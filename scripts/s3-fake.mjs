// A local S3-compatible object store for development and tests (files under .data/objects).
// Production points S3_ENDPOINT at a real S3-compatible service instead. Plain Node (no TypeScript loader):
// s3rver's dependencies do not load under the react-server condition the TypeScript scripts use.
import S3rver from 's3rver';
import { mkdirSync } from 'node:fs';
import path from 'node:path';

const dir = process.env.S3_FAKE_DIR ?? path.resolve('.data/objects');
const port = Number(new URL(process.env.S3_ENDPOINT ?? 'http://127.0.0.1:4568').port);
mkdirSync(dir, { recursive: true });
const server = new S3rver({ port, address: '127.0.0.1', silent: true, directory: dir, configureBuckets: [{ name: process.env.S3_BUCKET ?? 'excursion', configs: [] }] });
server.run().catch((e) => {
  console.error(`[excursion] object store fake failed: ${e.message}`);
  process.exit(1);
});
const stop = () => server.close().then(() => process.exit(0));
process.on('SIGTERM', stop);
process.on('SIGINT', stop);
