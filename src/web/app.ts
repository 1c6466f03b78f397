import express, { type Express } from 'express';
import { VIEWS_DIR, PUBLIC_DIR } from './paths.ts';
import type { AppDeps } from './deps.ts';
import { securityHeaders, sameOriginOnly } from './middleware/security.ts';
import { absoluteTimeout, csrfLocals, csrfProtection, isSecureSite, sessionMiddleware } from './middleware/sessions.ts';
import { errorHandler, notFoundHandler } from './middleware/errorHandler.ts';
import { createLimits } from './middleware/limits.ts';
import { refuseNulBytes } from './middleware/input.ts';
import { requestLog } from './middleware/requestLog.ts';
import { fairShare, type FairShare } from './middleware/fairShare.ts';
import { routers } from './routes/index.ts';
import { resumeExpiredVote } from './routes/vote/resume.ts';
import { resumeOrganiserForm } from './routes/organise/resumeForm.ts';

/** Builds the whole site. Never listens: main.ts does, and tests drive the app directly. */
export function createApp(given: Omit<AppDeps, 'limits'> & { limits?: AppDeps['limits']; turns?: FairShare }): Express {
  const deps: AppDeps = { ...given, limits: given.limits ?? createLimits(given.ctx.knex, given.ctx.secrets.codePepper) };
  const app = express();
  app.disable('x-powered-by');
  // Forwarding headers only from the configured proxies (TRUST_PROXY), never from any peer.
  app.set('trust proxy', Array.isArray(deps.config.trustProxy) ? [...deps.config.trustProxy] : deps.config.trustProxy);
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
  // Pages are read one at a time per client, in arrival order: a flood of any page from one
  // address waits its own turn and cannot slow other members' pages. Posts are not queued: each
  // one that does work passes an attempt limit counted in the database (codes, sign-ins, passphrases).
  const turns = given.turns ?? fairShare();
  app.use((req, res, next) => (req.method === 'GET' || req.method === 'HEAD' ? turns(req, res, next) : next()));
  app.use(express.urlencoded({ extended: false, limit: '512kb', parameterLimit: 5000 }));
  app.use(refuseNulBytes);
  app.use(sessionMiddleware(deps));
  app.use(absoluteTimeout(deps.ctx.now));
  // Locals come before the checks, so a page explaining a rejected form has them too.
  app.use(csrfLocals(deps));
  app.use((req, res, next) => {
    res.locals.path = req.path;
    res.locals.signedIn = Boolean(req.session?.organiserId);
    res.locals.demoOrganiser = Boolean(req.session?.organiserId && req.session.demo);
    next();
  });
  app.use(sameOriginOnly(deps.config.publicUrl));
  app.use(csrfProtection(deps));

  for (const make of routers) app.use(make(deps));

  app.use(notFoundHandler);
  app.use(errorHandler(deps.logger, [resumeExpiredVote, resumeOrganiserForm]));
  return app;
}
