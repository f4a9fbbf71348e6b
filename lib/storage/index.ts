import 'server-only';
import { S3Client, PutObjectCommand, GetObjectCommand } from '@aws-sdk/client-s3';

type Cache = { __excursionS3?: S3Client };
const g = globalThis as unknown as Cache;

/** Object storage settings from the environment (a real S3 in production, the local fake otherwise). */
export function storageConfig() {
  return {
    endpoint: process.env.S3_ENDPOINT || undefined,
    region: process.env.S3_REGION ?? 'us-east-1',
    bucket: process.env.S3_BUCKET ?? 'excursion',
    accessKeyId: process.env.S3_ACCESS_KEY_ID ?? '',
    secretAccessKey: process.env.S3_SECRET_ACCESS_KEY ?? '',
    forcePathStyle: process.env.S3_FORCE_PATH_STYLE !== 'false',
  };
}

function client(): S3Client {
  if (!g.__excursionS3) {
    const c = storageConfig();
    g.__excursionS3 = new S3Client({
      endpoint: c.endpoint,
      region: c.region,
      forcePathStyle: c.forcePathStyle,
      credentials: c.accessKeyId ? { accessKeyId: c.accessKeyId, secretAccessKey: c.secretAccessKey } : undefined,
      // Streamed bodies would otherwise be sent aws-chunked with a trailing checksum, which not every S3-compatible
      // store decodes; the SHA-256 of every object is kept in its metadata and checked on read where it matters.
      requestChecksumCalculation: 'WHEN_REQUIRED',
      responseChecksumValidation: 'WHEN_REQUIRED',
    });
  }
  return g.__excursionS3;
}

/** Stores bytes under a key chosen by the server. */
export async function putObject(key: string, body: Buffer, contentType: string, sha256: string): Promise<void> {
  await client().send(new PutObjectCommand({ Bucket: storageConfig().bucket, Key: key, Body: body, ContentType: contentType, Metadata: { sha256 } }));
}

/** Reads an object back as bytes. */
export async function getObject(key: string): Promise<Buffer> {
  const r = await client().send(new GetObjectCommand({ Bucket: storageConfig().bucket, Key: key }));
  return Buffer.from(await r.Body!.transformToByteArray());
}

/** Stores a file from disk by streaming it (bounded memory, any size the store accepts in one PUT). */
export async function putObjectFile(key: string, file: string, size: number, contentType: string, sha256: string): Promise<void> {
  const { createReadStream } = await import('node:fs');
  await client().send(new PutObjectCommand({ Bucket: storageConfig().bucket, Key: key, Body: createReadStream(file), ContentLength: size, ContentType: contentType, Metadata: { sha256 } }));
}

/** Reads an object as a Node stream (for files too large to hold in memory). */
export async function getObjectStream(key: string): Promise<NodeJS.ReadableStream> {
  const r = await client().send(new GetObjectCommand({ Bucket: storageConfig().bucket, Key: key }));
  return r.Body as unknown as NodeJS.ReadableStream;
}
