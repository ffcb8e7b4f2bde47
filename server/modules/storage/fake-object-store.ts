import { createHash, randomUUID } from 'node:crypto';
import fs from 'node:fs';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import path from 'node:path';

/**
 * A local stand-in for an S3-compatible object store, for development and tests only (binds to
 * 127.0.0.1). It speaks the path-style subset the product uses: CreateBucket / HeadBucket
 * (`PUT|HEAD /bucket`), PutObject / GetObject / HeadObject / DeleteObject (`PUT|GET|HEAD|DELETE
 * /bucket/key`), ListObjectsV2 (`GET /bucket?list-type=2&prefix=`) and ListBuckets (`GET /`; `GET /_health` answers unsigned for
 * readiness checks). Requests signed by the AWS SDK are accepted as they come: the signature is not
 * checked, only that the request names an access key (anonymous requests get 403, like a real store).
 * A PutObject that carries `x-amz-checksum-sha256` is refused with BadDigest when the body differs.
 *
 * Objects are files under `dir/<bucket>/`, named by the key percent-encoded (one flat folder per
 * bucket, so no key can reach outside it), with a `.meta.json` beside each holding its type,
 * user metadata and hashes. Writes go to a temporary file renamed into place, so a reader never sees
 * half an object.
 */
export interface FakeObjectStore {
  port: number;
  dir: string;
  close(): Promise<void>;
}

interface ObjectMeta {
  contentType: string;
  size: number;
  etag: string;
  sha256: string;
  lastModified: string;
  metadata: Record<string, string>;
}

const xml = (body: string) => `<?xml version="1.0" encoding="UTF-8"?>\n${body}`;
const esc = (s: string) =>
  s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');

function sendError(res: http.ServerResponse, status: number, code: string, message: string, head = false) {
  res.writeHead(status, { 'content-type': 'application/xml' });
  res.end(head ? undefined : xml(`<Error><Code>${code}</Code><Message>${esc(message)}</Message></Error>`));
}

const BUCKET_NAME = /^[a-z0-9][a-z0-9.-]{1,61}[a-z0-9]$/;

/** Reads a request body; decodes the SDK's `aws-chunked` framing (chunk sizes, signatures, trailers). */
async function readBody(req: http.IncomingMessage): Promise<Buffer> {
  const parts: Buffer[] = [];
  for await (const c of req) parts.push(c as Buffer);
  const raw = Buffer.concat(parts);
  const encoding = String(req.headers['content-encoding'] ?? '');
  const sha = String(req.headers['x-amz-content-sha256'] ?? '');
  if (!encoding.includes('aws-chunked') && !sha.startsWith('STREAMING-')) return raw;
  const out: Buffer[] = [];
  let at = 0;
  for (;;) {
    const eol = raw.indexOf('\r\n', at);
    if (eol < 0) break;
    const size = parseInt(raw.subarray(at, eol).toString('latin1').split(';')[0]!, 16);
    if (!Number.isFinite(size) || size === 0) break;
    out.push(raw.subarray(eol + 2, eol + 2 + size));
    at = eol + 2 + size + 2;
  }
  return Buffer.concat(out);
}

export async function startFakeObjectStore(opts: { port?: number; dir: string }): Promise<FakeObjectStore> {
  const root = path.resolve(opts.dir);
  fs.mkdirSync(root, { recursive: true });
  const bucketDir = (b: string) => path.join(root, b);
  const objectFile = (b: string, key: string) => path.join(bucketDir(b), encodeURIComponent(key));
  const readMeta = (file: string): ObjectMeta | null => {
    try {
      return JSON.parse(fs.readFileSync(`${file}.meta.json`, 'utf8')) as ObjectMeta;
    } catch {
      return null;
    }
  };

  const handle = async (req: http.IncomingMessage, res: http.ServerResponse) => {
    const url = new URL(req.url ?? '/', 'http://store.local');
    const method = req.method ?? 'GET';
    const head = method === 'HEAD';
    if (url.pathname === '/_health') {
      // Readiness for the process supervisor (no bucket name can start with "_").
      res.writeHead(200, { 'content-type': 'text/plain' });
      res.end('ok');
      return;
    }
    const auth = String(req.headers.authorization ?? '');
    const signedQuery = url.searchParams.has('X-Amz-Credential');
    if (!auth.includes('Credential=') && !signedQuery) {
      return sendError(res, 403, 'AccessDenied', 'Requests must be signed with an access key.', head);
    }
    const segments = url.pathname.split('/').slice(1);
    const bucket = decodeURIComponent(segments[0] ?? '');
    const key = segments.slice(1).map(decodeURIComponent).join('/');

    if (!bucket) {
      if (method !== 'GET') return sendError(res, 405, 'MethodNotAllowed', 'Not allowed here.');
      const names = fs.readdirSync(root, { withFileTypes: true }).filter((d) => d.isDirectory());
      res.writeHead(200, { 'content-type': 'application/xml' });
      res.end(
        xml(
          `<ListAllMyBucketsResult><Owner><ID>local</ID></Owner><Buckets>${names
            .map((d) => `<Bucket><Name>${esc(d.name)}</Name></Bucket>`)
            .join('')}</Buckets></ListAllMyBucketsResult>`,
        ),
      );
      return;
    }
    if (!BUCKET_NAME.test(bucket)) return sendError(res, 400, 'InvalidBucketName', 'Bad bucket name.', head);
    const bucketExists = fs.existsSync(bucketDir(bucket));

    if (!key) {
      if (method === 'PUT') {
        await readBody(req);
        if (bucketExists) return sendError(res, 409, 'BucketAlreadyOwnedByYou', 'The bucket exists.');
        fs.mkdirSync(bucketDir(bucket), { recursive: true });
        res.writeHead(200, { location: `/${bucket}` });
        res.end();
        return;
      }
      if (!bucketExists) return sendError(res, 404, 'NoSuchBucket', 'No such bucket.', head);
      if (head) {
        res.writeHead(200);
        res.end();
        return;
      }
      if (method === 'GET') {
        const prefix = url.searchParams.get('prefix') ?? '';
        const keys = fs
          .readdirSync(bucketDir(bucket))
          .filter((f) => !f.endsWith('.meta.json') && !f.startsWith('.tmp-'))
          .map((f) => decodeURIComponent(f))
          .filter((k) => k.startsWith(prefix))
          .sort();
        const max = Math.min(Number(url.searchParams.get('max-keys') ?? 1000) || 1000, 1000);
        const page = keys.slice(0, max);
        res.writeHead(200, { 'content-type': 'application/xml' });
        res.end(
          xml(
            `<ListBucketResult><Name>${esc(bucket)}</Name><Prefix>${esc(prefix)}</Prefix><KeyCount>${page.length}</KeyCount><MaxKeys>${max}</MaxKeys><IsTruncated>${keys.length > max}</IsTruncated>${page
              .map((k) => {
                const m = readMeta(objectFile(bucket, k));
                return `<Contents><Key>${esc(k)}</Key><Size>${m?.size ?? 0}</Size><ETag>&quot;${m?.etag ?? ''}&quot;</ETag><LastModified>${m?.lastModified ?? ''}</LastModified><StorageClass>STANDARD</StorageClass></Contents>`;
              })
              .join('')}</ListBucketResult>`,
          ),
        );
        return;
      }
      return sendError(res, 405, 'MethodNotAllowed', 'Not allowed on a bucket here.');
    }

    if (!bucketExists) return sendError(res, 404, 'NoSuchBucket', 'No such bucket.', head);
    if (key.length > 1024) return sendError(res, 400, 'KeyTooLongError', 'The key is too long.', head);
    const file = objectFile(bucket, key);

    if (method === 'PUT') {
      const body = await readBody(req);
      const sha = createHash('sha256').update(body).digest();
      const claimed = req.headers['x-amz-checksum-sha256'];
      if (typeof claimed === 'string' && claimed !== sha.toString('base64')) {
        return sendError(res, 400, 'BadDigest', 'The SHA-256 you specified did not match the body.');
      }
      const metadata: Record<string, string> = {};
      for (const [h, v] of Object.entries(req.headers)) {
        if (h.startsWith('x-amz-meta-') && typeof v === 'string') metadata[h.slice(11)] = v;
      }
      const meta: ObjectMeta = {
        contentType: String(req.headers['content-type'] ?? 'application/octet-stream'),
        size: body.length,
        etag: createHash('md5').update(body).digest('hex'),
        sha256: sha.toString('base64'),
        lastModified: new Date().toISOString(),
        metadata,
      };
      const tmp = path.join(bucketDir(bucket), `.tmp-${randomUUID()}`);
      fs.writeFileSync(tmp, body);
      fs.writeFileSync(`${file}.meta.json`, JSON.stringify(meta));
      fs.renameSync(tmp, file);
      res.writeHead(200, { etag: `"${meta.etag}"`, 'x-amz-checksum-sha256': meta.sha256 });
      res.end();
      return;
    }
    if (method === 'DELETE') {
      fs.rmSync(file, { force: true });
      fs.rmSync(`${file}.meta.json`, { force: true });
      res.writeHead(204);
      res.end();
      return;
    }
    if (method === 'GET' || head) {
      const meta = readMeta(file);
      if (!meta || !fs.existsSync(file)) return sendError(res, 404, 'NoSuchKey', 'No such key.', head);
      const headers: http.OutgoingHttpHeaders = {
        'content-type': meta.contentType,
        // The file as it is now (not as recorded): a changed file must read back as changed.
        'content-length': fs.statSync(file).size,
        etag: `"${meta.etag}"`,
        'last-modified': new Date(meta.lastModified).toUTCString(),
      };
      for (const [k, v] of Object.entries(meta.metadata)) headers[`x-amz-meta-${k}`] = v;
      res.writeHead(200, headers);
      if (head) return void res.end();
      fs.createReadStream(file).pipe(res);
      return;
    }
    return sendError(res, 405, 'MethodNotAllowed', 'Not allowed on an object here.');
  };

  const server = http.createServer((req, res) => {
    handle(req, res).catch((err: Error) => {
      if (!res.headersSent) sendError(res, 500, 'InternalError', err.message);
      else res.destroy();
    });
  });
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(opts.port ?? 0, '127.0.0.1', () => resolve());
  });
  return {
    port: (server.address() as AddressInfo).port,
    dir: root,
    close: () =>
      new Promise<void>((r) => {
        server.closeAllConnections();
        server.close(() => r());
      }),
  };
}
