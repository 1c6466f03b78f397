import { Router } from 'express';
import type { AppDeps } from '../../deps.ts';
import { accountRoutes } from './accountRoutes.ts';
import { requireOrganiser } from './auth.ts';
import { codeRoutes } from './codeRoutes.ts';
import { copyRoutes } from './copyRoutes.ts';
import { dashboardRoutes } from './dashboardRoutes.ts';
import { electionRoutes } from './electionRoutes.ts';
import { tallyRoutes } from './tallyRoutes.ts';
import { basicsRoutes } from './basicsRoutes.ts';
import { organiserRoutes } from './organiserRoutes.ts';
import { resumeRoutes } from './resumeForm.ts';
import { demoRoutes } from './demoRoutes.ts';
import { rosterRoutes } from './rosterRoutes.ts';
import { mailRoutes } from './mailRoutes.ts';

/**
 * The organiser area, /organise/**. First run, sign-in and sign-out come first; every other
 * path needs a signed-in organiser, and each election is visible only to its owner (404 otherwise).
 */
export function organiseRouter(deps: AppDeps): Router {
  const router = Router();
  router.use(accountRoutes(deps));
  router.use(resumeRoutes(deps));
  router.use(demoRoutes(deps));
  router.use('/organise', requireOrganiser(deps));
  // "new" is matched before ":id", so the order of these matters.
  router.use(electionRoutes(deps));
  router.use(copyRoutes(deps));
  router.use(codeRoutes(deps));
  router.use(mailRoutes(deps));
  router.use(tallyRoutes(deps));
  router.use(dashboardRoutes(deps));
  router.use(basicsRoutes(deps));
  router.use(organiserRoutes(deps));
  router.use(rosterRoutes(deps));
  return router;
}
