import pino, { type DestinationStream, type Logger } from 'pino';

/**
 * One logger for the process. Request bodies, cookies and headers are never logged,
 * and the redaction list catches anything that might still carry a secret.
 */
export function createLogger(level: string, destination?: DestinationStream): Logger {
  const options: pino.LoggerOptions = {
    level,
    base: undefined,
    redact: {
      paths: ['passphrase', 'password', 'code', 'codes', 'receipt', 'cookie', 'sid', '*.passphrase', '*.password', '*.code', '*.receipt', '*.cookie'],
      censor: '[redacted]',
    },
  };
  return destination ? pino(options, destination) : pino(options);
}

export type { Logger };
