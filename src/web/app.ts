import express, { type Express } from 'express';
import rateLimit from 'express-rate-limit';
import { VIEWS_DIR, PUBLIC_DIR } from './paths.ts';
import type { AppDeps } from './deps.ts';
import { securityHeaders, sameOriginOnly } from './middleware/security.ts';
import { absoluteTimeout, csrfLocals, csrfProtection, isSecureSite, sessionMiddleware } from './middleware/sessions.ts';
import { errorHandler, notFoundHandler } from './middleware/errorHandler.ts';
import { requestLog } from './middleware/requestLog.ts';
import { routers } from './routes/index.ts';
import { resumeExpiredVote } from './routes/vote/resume.ts';
import { resumeOrganiserForm } from './routes/organise/resumeForm.ts';

/** Builds the whole site. Never listens: main.ts does, and tests drive the app directly. */
export function createApp(deps: AppDeps): Express {
  const app = express();
  app.disable('x-powered-by');
  app.set('trust proxy', deps.config.trustProxy ? 1 : false);
  app.set('view engine', 'ejs');
  app.set('views', VIEWS_DIR);
  // Express caches compiled views only when NODE_ENV=production; without it every render read
  // and recompiled its templates (the largest share of a page's server time). Views change
  // only with a new build, so cache them always.
  app.set('view cache', true);
  app.locals.siteName = 'Veiltally';
  app.locals.publicUrl = deps.config.publicUrl;

  app.use(requestLog(deps.logger));
  app.use(securityHeaders(isSecureSite(deps.config.publicUrl)));
  app.use('/static', express.static(PUBLIC_DIR, { index: false, maxAge: '1h' }));
  app.use(express.urlencoded({ extended: false, limit: '512kb', parameterLimit: 5000 }));
  app.use(sessionMiddleware(deps));
  app.use(absoluteTimeout(deps.ctx.now));
  // Locals come before the checks, so a page explaining a rejected form has them too.
  app.use(csrfLocals);
  app.use((req, res, next) => {
    res.locals.path = req.path;
    res.locals.signedIn = Boolean(req.session?.organiserId);
    res.locals.demoOrganiser = Boolean(req.session?.organiserId && req.session.demo);
    next();
  });
  app.use(sameOriginOnly);
  app.use(csrfProtection);

  for (const make of routers) app.use(make(deps));

  app.use(notFoundHandler);
  app.use(errorHandler(deps.logger, [resumeExpiredVote, resumeOrganiserForm]));
  return app;
}

/**
 * A small in-memory limiter; limits are per app server (see DEVELOPERS.md).
 * `countFailuresOnly` leaves answers below 400 uncounted, so only failed attempts use up the
 * allowance (OWASP Authentication Cheat Sheet: limit failed login attempts).
 */
export function limiter(max: number, windowMs: number, onLimit: () => Error, options: { countFailuresOnly?: boolean } = {}) {
  return rateLimit({
    windowMs,
    limit: max,
    skipSuccessfulRequests: options.countFailuresOnly ?? false,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    handler: (_req, _res, next) => next(onLimit()),
  });
}
