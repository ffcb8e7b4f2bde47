import type { Readable } from 'node:stream';
import type { Env } from '#server/env';
import {
  CreateBucketCommand,
  DeleteObjectCommand,
  GetObjectCommand,
  HeadBucketCommand,
  HeadObjectCommand,
  ListObjectsV2Command,
  PutObjectCommand,
  S3Client,
  S3ServiceException,
} from '@aws-sdk/client-s3';

/** Where files go: an S3-compatible bucket (the local fake store by default). */
export interface StorageSettings {
  endpoint: string;
  bucket: string;
  region: string;
  accessKeyId: string;
  secretAccessKey: string;
  forcePathStyle: boolean;
}

export interface PutOptions {
  contentType: string;
  contentLength: number;
  /** Hex SHA-256 of the body: the store checks it (x-amz-checksum-sha256) and refuses a body that differs. */
  sha256Hex: string;
  metadata?: Record<string, string>;
}

/** The few object operations the product needs, over the S3 API. */
export interface ObjectStore {
  readonly bucket: string;
  /** Creates the bucket when it is missing (safe to repeat; a concurrent creation is fine). */
  ensureBucket(): Promise<void>;
  put(key: string, body: Readable | Buffer, opts: PutOptions): Promise<void>;
  /** The whole object (attachments are bounded by their upload limit), or null when there is none. */
  get(key: string): Promise<Buffer | null>;
  exists(key: string): Promise<boolean>;
  remove(key: string): Promise<void>;
  /** Keys under a prefix (first 1,000), for checks and tests. */
  list(prefix: string): Promise<string[]>;
  close(): void;
}

/** The storage settings of the server's configuration. */
export function storageSettingsOf(env: Env): StorageSettings {
  return {
    endpoint: env.STORAGE_ENDPOINT,
    bucket: env.STORAGE_BUCKET,
    region: env.STORAGE_REGION,
    accessKeyId: env.STORAGE_ACCESS_KEY_ID,
    secretAccessKey: env.STORAGE_SECRET_ACCESS_KEY,
    forcePathStyle: env.STORAGE_FORCE_PATH_STYLE,
  };
}

const notFound = (e: unknown) =>
  e instanceof S3ServiceException &&
  (e.$metadata.httpStatusCode === 404 ||
    e.name === 'NoSuchKey' ||
    e.name === 'NotFound' ||
    e.name === 'NoSuchBucket');

export function createObjectStore(s: StorageSettings): ObjectStore {
  const client = new S3Client({
    endpoint: s.endpoint,
    region: s.region,
    forcePathStyle: s.forcePathStyle,
    credentials: { accessKeyId: s.accessKeyId, secretAccessKey: s.secretAccessKey },
    // Checksums only where the operation requires one (we send our own SHA-256 on every put). The
    // SDK's newer default (a CRC trailer on every upload) is refused by several S3-compatible stores.
    requestChecksumCalculation: 'WHEN_REQUIRED',
    responseChecksumValidation: 'WHEN_REQUIRED',
  });
  let bucketReady: Promise<void> | null = null;

  const ensureBucket = () =>
    (bucketReady ??= (async () => {
      try {
        await client.send(new HeadBucketCommand({ Bucket: s.bucket }));
      } catch (e) {
        if (!notFound(e)) throw e;
        try {
          await client.send(new CreateBucketCommand({ Bucket: s.bucket }));
        } catch (c) {
          const name = c instanceof S3ServiceException ? c.name : '';
          if (name !== 'BucketAlreadyOwnedByYou' && name !== 'BucketAlreadyExists') throw c;
        }
      }
    })().catch((e: unknown) => {
      bucketReady = null; // try again next time (the store may come up later)
      throw e;
    }));

  return {
    bucket: s.bucket,
    ensureBucket,
    async put(key, body, opts) {
      await ensureBucket();
      await client.send(
        new PutObjectCommand({
          Bucket: s.bucket,
          Key: key,
          Body: body,
          ContentType: opts.contentType,
          ContentLength: opts.contentLength,
          ChecksumSHA256: Buffer.from(opts.sha256Hex, 'hex').toString('base64'),
          Metadata: { ...opts.metadata, sha256: opts.sha256Hex },
        }),
      );
    },
    async get(key) {
      try {
        const out = await client.send(new GetObjectCommand({ Bucket: s.bucket, Key: key }));
        if (!out.Body) return null;
        return Buffer.from(await out.Body.transformToByteArray());
      } catch (e) {
        if (notFound(e)) return null;
        throw e;
      }
    },
    async exists(key) {
      try {
        await client.send(new HeadObjectCommand({ Bucket: s.bucket, Key: key }));
        return true;
      } catch (e) {
        if (notFound(e)) return false;
        throw e;
      }
    },
    async remove(key) {
      await client.send(new DeleteObjectCommand({ Bucket: s.bucket, Key: key }));
    },
    async list(prefix) {
      try {
        const out = await client.send(new ListObjectsV2Command({ Bucket: s.bucket, Prefix: prefix }));
        return (out.Contents ?? []).map((c) => c.Key ?? '').filter(Boolean);
      } catch (e) {
        if (notFound(e)) return [];
        throw e;
      }
    },
    close() {
      client.destroy();
    },
  };
}
