import { pino, type Logger } from 'pino';

export type { Logger };

export function createLogger(level: string, name = 'phasewright'): Logger {
  return pino({
    name,
    level,
    redact: ['req.headers.cookie', 'req.headers.authorization', '*.password', '*.pin'],
  });
}
