import fs from 'node:fs';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import { randomUUID } from 'node:crypto';
import smtpServerModule from 'smtp-server';
import { simpleParser } from 'mailparser';
import type { OutboxMessage } from '#shared/schemas/outbox';

/**
 * A local stand-in for a mail relay: accepts SMTP on loopback, keeps every message, and lists them
 * over HTTP (`GET /messages`, newest first) for the admin outbox. Messages are appended to a JSON-lines
 * file when `storeFile` is given, so a restart keeps them. It accepts any sender and recipient and
 * no authentication: it is for development and tests only and binds to 127.0.0.1.
 */
export interface FakeMailServer {
  smtpPort: number;
  httpPort: number;
  messages(): OutboxMessage[];
  close(): Promise<void>;
}

const MAX_KEPT = 2000;

export async function startFakeMailServer(opts: {
  smtpPort?: number;
  httpPort?: number;
  storeFile?: string;
}): Promise<FakeMailServer> {
  const kept: OutboxMessage[] = [];
  if (opts.storeFile && fs.existsSync(opts.storeFile)) {
    for (const line of fs.readFileSync(opts.storeFile, 'utf8').split('\n')) {
      if (!line.trim()) continue;
      try {
        kept.push(JSON.parse(line) as OutboxMessage);
      } catch {
        // A torn last line after a crash is skipped; every complete line is kept.
      }
    }
  }

  const smtp = new smtpServerModule.SMTPServer({
    authOptional: true,
    disabledCommands: ['STARTTLS', 'AUTH'],
    logger: false,
    size: 5 * 1024 * 1024,
    onData(stream, _session, callback) {
      simpleParser(stream)
        .then((parsed) => {
          const toField = parsed.to;
          const to = (Array.isArray(toField) ? toField : toField ? [toField] : []).flatMap((a) =>
            a.value.map((v) => v.address ?? ''),
          );
          const message: OutboxMessage = {
            id: randomUUID(),
            from: parsed.from?.text ?? '',
            to,
            subject: parsed.subject ?? '',
            text: parsed.text ?? '',
            receivedAt: new Date().toISOString(),
          };
          kept.push(message);
          if (kept.length > MAX_KEPT) kept.splice(0, kept.length - MAX_KEPT);
          if (opts.storeFile) fs.appendFileSync(opts.storeFile, JSON.stringify(message) + '\n');
          callback();
        })
        .catch((err: Error) => callback(err));
    },
  });
  await new Promise<void>((resolve, reject) => {
    smtp.once('error', reject);
    smtp.listen(opts.smtpPort ?? 0, '127.0.0.1', () => resolve());
  });

  const web = http.createServer((req, res) => {
    if (req.method === 'GET' && req.url?.startsWith('/messages')) {
      res.writeHead(200, { 'content-type': 'application/json' });
      res.end(JSON.stringify({ messages: [...kept].reverse() }));
      return;
    }
    res.writeHead(404, { 'content-type': 'application/json' });
    res.end(JSON.stringify({ error: 'not found' }));
  });
  await new Promise<void>((resolve, reject) => {
    web.once('error', reject);
    web.listen(opts.httpPort ?? 0, '127.0.0.1', () => resolve());
  });

  return {
    smtpPort: (smtp.server.address() as AddressInfo).port,
    httpPort: (web.address() as AddressInfo).port,
    messages: () => [...kept].reverse(),
    close: async () => {
      await new Promise<void>((r) => smtp.close(() => r()));
      await new Promise<void>((r) => web.close(() => r()));
    },
  };
}
