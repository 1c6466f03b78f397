import type { Response } from 'express';
import { isVeiltallyError } from '../../../errors.ts';

/**
 * An action that does not fit the election's state (already open, nothing to publish…):
 * the reason and a way back to the election, instead of the site-wide error page.
 */
export function renderNotNow(res: Response, election: { id: string; title: string }, message: string, status = 409): void {
  res.status(status).render('organise/not-now', { title: 'That cannot be done now', heading: 'That cannot be done now', election, message });
}

/** Re-throws anything that is not a state conflict (409), so real failures reach the one error handler. */
export function stateConflictMessage(e: unknown): string {
  if (isVeiltallyError(e) && e.status === 409) return e.message;
  throw e;
}
