import type { Router } from 'express';
import type { AppDeps } from '../deps.ts';
import { siteRouter } from './site/router.ts';
import { voteRouter } from './vote/router.ts';
import { resultsRouter } from './results/router.ts';
import { organiseRouter } from './organise/router.ts';
import { helpRouter } from './help/router.ts';
import { statementsRouter } from './statements/router.ts';

/** Every router of the site, one per audience. Order matters only for overlapping paths. */
export const routers: ReadonlyArray<(deps: AppDeps) => Router> = [
  siteRouter,
  helpRouter,
  voteRouter,
  statementsRouter,
  resultsRouter,
  organiseRouter,
];
