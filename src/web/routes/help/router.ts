import { Router } from 'express';
import { z } from 'zod';
import { EPSILON_RULE, MAX_DRAW_OPTIONS, parseEpsilon } from '../../../mechanism/index.ts';
import { epsilonHelpView } from '../../presenters/epsilonHelp.ts';

export const HELP_DRAWN_PATH = '/help/how-the-result-is-drawn';
export const HELP_EPSILON_PATH = '/help/choosing-epsilon';

const whole = (min: number, max: number, fallback: number) =>
  z.preprocess(
    (v) => (v === undefined || v === '' ? String(fallback) : v),
    z
      .string()
      .regex(/^[0-9]{1,3}$/)
      .transform(Number)
      .pipe(z.number().int().min(min).max(max)),
  );

/** The settings a reader may try on the ε page; anything else falls back to a message and the defaults. */
const epsilonQuery = z.object({
  options: whole(2, MAX_DRAW_OPTIONS, 6),
  seats: whole(1, MAX_DRAW_OPTIONS - 1, 1),
  epsilon: z.preprocess((v) => (v === undefined || v === '' ? '1' : v), z.string().max(16)),
});

/** Help pages: plain words first, then the mathematics with citations. Public, no session, no forms that post. */
export function helpRouter(): Router {
  const router = Router();

  router.get(HELP_DRAWN_PATH, (_req, res) => {
    res.render('help/how-drawn', { title: 'How the result is drawn' });
  });

  router.get(HELP_EPSILON_PATH, (req, res) => {
    const parsed = epsilonQuery.safeParse(req.query);
    let problem: string | null = null;
    let input = { options: 6, seats: 1, epsilon: '1' };
    if (!parsed.success) problem = `Options must be a whole number from 2 to ${MAX_DRAW_OPTIONS}, and seats from 1 to one fewer than the options.`;
    else if (parsed.data.seats >= parsed.data.options) problem = 'There must be fewer seats than options.';
    else {
      try {
        parseEpsilon(parsed.data.epsilon);
        input = parsed.data;
      } catch {
        problem = `ε: ${EPSILON_RULE}`;
      }
    }
    res.status(problem ? 400 : 200).render('help/choosing-epsilon', { title: 'Choosing ε', view: epsilonHelpView(input), problem });
  });

  return router;
}
