/**
 * Typed failures. Each names itself, carries one HTTP status and a message
 * that is safe to show to anyone: never a secret, a code, a ballot or a stack.
 * The single web error handler and the CLI both map these, nothing else.
 */
export abstract class VeiltallyError extends Error {
  /** Stable machine name, also used to pick the friendly error page. */
  abstract readonly code: string;
  /** HTTP status the web layer answers with. */
  readonly status: number = 400;

  constructor(message: string, options?: { cause?: unknown }) {
    super(message, options);
    this.name = new.target.name;
  }
}

/** Input that failed validation at an edge (form, CLI flag, config, file). */
export class InvalidInput extends VeiltallyError {
  readonly code = 'InvalidInput';
  override readonly status = 400;
  constructor(
    message: string,
    readonly issues: ReadonlyArray<{ path: string; message: string }> = [],
  ) {
    super(message);
  }
}

export class NotFound extends VeiltallyError {
  readonly code = 'NotFound';
  override readonly status = 404;
  constructor(message = 'We could not find that page.') {
    super(message);
  }
}

export function isVeiltallyError(e: unknown): e is VeiltallyError {
  return e instanceof VeiltallyError;
}
