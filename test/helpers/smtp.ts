import { SMTPServer } from 'smtp-server';
import { simpleParser, type ParsedMail } from 'mailparser';

/**
 * A real SMTP server on loopback (the smtp-server package) that keeps every message it accepts,
 * read back with mailparser. `refuse` decides per recipient: a string is the refusal text (a 550
 * answer at RCPT TO), so tests see the answer the organiser is shown.
 */
export interface Received {
  envelopeTo: string[];
  raw: string;
  mail: ParsedMail;
}

export interface LoopbackSmtp {
  url: string;
  port: number;
  received: Received[];
  /** Resolves once `n` messages have arrived (polling, never a fixed sleep). */
  waitFor(n: number, timeoutMs?: number): Promise<Received[]>;
  close(): Promise<void>;
}

export async function startSmtp(
  options: { refuse?: (address: string) => string | null; /** Wait this long before answering DATA (a slow server). */ acceptDelayMs?: number } = {},
): Promise<LoopbackSmtp> {
  const received: Received[] = [];
  const pending: Promise<void>[] = [];
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ['STARTTLS', 'AUTH'],
    logger: false,
    size: 1024 * 1024,
    onRcptTo(address, _session, callback) {
      const refusal = options.refuse?.(address.address) ?? null;
      if (refusal === null) return callback();
      const err = new Error(refusal) as Error & { responseCode: number };
      err.responseCode = 550;
      callback(err);
    },
    onData(stream, session, callback) {
      const chunks: Buffer[] = [];
      stream.on('data', (d: Buffer) => chunks.push(d));
      stream.on('end', () => {
        const raw = Buffer.concat(chunks);
        const envelopeTo = session.envelope.rcptTo.map((r) => r.address);
        pending.push(
          simpleParser(raw).then((mail) => {
            received.push({ envelopeTo, raw: raw.toString('utf8'), mail });
          }),
        );
        if (options.acceptDelayMs) setTimeout(() => callback(null, 'accepted for delivery'), options.acceptDelayMs);
        else callback(null, 'accepted for delivery');
      });
    },
  });
  // A client killed mid-message resets its connection: expected in the crash tests, not a failure here.
  server.on('error', () => undefined);
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', () => resolve()));
  const port = (server.server.address() as { port: number }).port;
  return {
    url: `smtp://127.0.0.1:${port}`,
    port,
    received,
    async waitFor(n, timeoutMs = 60_000) {
      const deadline = Date.now() + timeoutMs;
      while (received.length < n) {
        await Promise.all(pending);
        if (received.length >= n) break;
        if (Date.now() > deadline) throw new Error(`only ${received.length} of ${n} messages arrived`);
        await new Promise((r) => setTimeout(r, 20));
      }
      await Promise.all(pending);
      return received;
    },
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  };
}
