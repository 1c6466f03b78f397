/**
 * What the use-cases need from a mail service. The web app and housekeeping are given one
 * (src/mail builds it from the configuration); the use-cases never import an adapter, and tests
 * pass one that talks to a real SMTP server on loopback.
 */
export interface OutgoingMail {
  /** One recipient: an address checked by the roster, and an optional display name. */
  readonly to: { readonly address: string; readonly name?: string | null };
  readonly subject: string;
  readonly text: string;
}

export type MailOutcome =
  /** The SMTP server took responsibility for the message (a 2xx answer to DATA), or the .eml file is in place. */
  | { readonly ok: true; readonly answer: string }
  /** Not accepted. `answer` is the server's reply (or the local error), shown to the organiser. */
  | { readonly ok: false; readonly answer: string };

export interface Mailer {
  send(mail: OutgoingMail): Promise<MailOutcome>;
  /** Where mail goes, for the organiser's page: an SMTP server, or the outbox folder on this server. */
  readonly where: { readonly kind: 'smtp'; readonly host: string } | { readonly kind: 'outbox'; readonly folder: string };
  close(): Promise<void>;
}
