import pino, { type Logger } from 'pino';

/**
 * One logger for the process. Request bodies, cookies and headers are never logged,
 * and the redaction list catches anything that might still carry a secret.
 */
export function createLogger(level: string): Logger {
  return pino({
    level,
    base: undefined,
    redact: {
      paths: ['passphrase', 'password', 'code', 'codes', 'receipt', 'cookie', 'sid', '*.passphrase', '*.password', '*.code', '*.receipt', '*.cookie'],
      censor: '[redacted]',
    },
  });
}

export type { Logger };
