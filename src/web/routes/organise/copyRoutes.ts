import { Router, type Response } from 'express';
import { copyElection, planCopy } from '../../../elections/copyElection.ts';
import { InvalidInput } from '../../../errors.ts';
import type { AppDeps } from '../../deps.ts';
import { noStore } from '../../middleware/security.ts';
import { copyView } from '../../presenters/copyElection.ts';
import { organiserOf } from './auth.ts';
import { readPassphrase } from './electionSchema.ts';
import { errorsFrom, summaryOf, type FieldErrors } from './forms.ts';

/**
 * "Make a new draft from this": a page saying what the copy takes and what it never does, with the
 * new draft's tally passphrase (its key pair is its own), then the copy and the new draft's form.
 * Any election the organiser can see may be copied, in any state; anyone else's is a 404.
 */
export function copyRoutes(deps: AppDeps): Router {
  const router = Router();
  const { ctx } = deps;
  router.use('/organise/elections/:id/copy', noStore); // a passphrase form

  async function render(res: Response, id: string, status: number, errors: FieldErrors = {}) {
    const c = copyView(await planCopy(ctx, { electionId: id, organiserId: organiserOf(res).id }));
    res.status(status).render('organise/copy', {
      title: `New draft from ${c.title}`,
      c,
      errors,
      summary: summaryOf(errors),
      // The passphrase fields start empty, also after a refusal: it is never sent back.
      form: { passphrase: { passphrase: '', passphraseAgain: '' } },
    });
  }

  router.get('/organise/elections/:id/copy', async (req, res) => {
    await render(res, req.params.id, 200);
  });

  router.post('/organise/elections/:id/copy', async (req, res) => {
    const pass = readPassphrase(req.body);
    if (Object.keys(pass.errors).length > 0) return render(res, req.params.id, 400, pass.errors);
    try {
      const made = await copyElection(ctx, { electionId: req.params.id, organiserId: organiserOf(res).id, passphrase: pass.passphrase });
      res.redirect(303, `/organise/elections/${made.electionId}/edit?copied=${made.electorate === 'printed-instead' ? 'printed' : 'yes'}`);
    } catch (e) {
      if (!(e instanceof InvalidInput)) throw e;
      await render(res, req.params.id, 400, errorsFrom(e));
    }
  });

  return router;
}
