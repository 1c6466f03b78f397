import { Router, type Response } from 'express';
import { loadDashboard } from '../../../elections/dashboard.ts';
import { issueCodes, recallCodeBatch } from '../../../elections/issueCodes.ts';
import { revokeCode } from '../../../elections/revokeCode.ts';
import { isVeiltallyError } from '../../../errors.ts';
import type { AppDeps } from '../../deps.ts';
import { noStore } from '../../middleware/security.ts';
import { ballotQrDataUrl, ballotUrl, codesCsv, codesFileName, slipsView } from '../../presenters/codes.ts';
import { dashboardView } from '../../presenters/dashboard.ts';
import { organiserOf } from './auth.ts';
import { readBatch, readIssue, revokeCodeField, type IssueValues } from './codeSchema.ts';
import { summaryOf, type FieldErrors } from './forms.ts';

/**
 * Issuing and withdrawing ballot codes. The POST answer IS the chosen format (CSV download,
 * printable slips or an on-screen list): codes are shown this once and never stored in clear.
 * Every answer here is no-store (OWASP ASVS 5.0 §14.3: no caching of sensitive data).
 */
export function codeRoutes(deps: AppDeps): Router {
  const router = Router();
  const { ctx } = deps;
  router.use('/organise/elections/:id/codes', noStore);

  interface PageState {
    issue?: IssueValues;
    code?: string;
    errors?: FieldErrors;
    revoked?: boolean;
  }

  async function renderPage(res: Response, id: string, status: number, state: PageState = {}) {
    const dash = await loadDashboard(ctx, { electionId: id, organiserId: organiserOf(res).id });
    const errors = state.errors ?? {};
    res.status(status).render('organise/codes', {
      title: `Ballot codes for ${dash.election.title}`,
      d: dashboardView(dash),
      url: ballotUrl(deps.config.publicUrl, dash.election.id),
      issue: state.issue ?? { count: '', format: 'csv' },
      code: state.code ?? '',
      errors,
      summary: summaryOf(errors),
      revoked: state.revoked ?? false,
    });
  }

  router.get('/organise/elections/:id/codes', async (req, res) => {
    await renderPage(res, req.params.id, 200, { revoked: req.query.revoked === '1' });
  });

  router.post('/organise/elections/:id/codes', async (req, res) => {
    const id = String(req.params.id);
    const form = readIssue(req.body);
    if (form.count === null || Object.keys(form.errors).length > 0) return renderPage(res, id, 400, { issue: form.values, errors: form.errors });
    let codes: string[];
    let batch: string;
    try {
      ({ codes, batch } = await issueCodes(ctx, { electionId: id, organiserId: organiserOf(res).id, count: form.count }));
    } catch (e) {
      if (isVeiltallyError(e) && (e.status === 409 || e.status === 400))
        return renderPage(res, id, e.status, { issue: form.values, errors: { count: e.message } });
      throw e;
    }
    // Read after issuing, so the counts on the next page include this batch.
    const dash = await loadDashboard(ctx, { electionId: id, organiserId: organiserOf(res).id });
    const title = `New ballot codes for ${dash.election.title}`;
    if (form.values.format === 'csv') {
      // A page with the current counts and a download button; the file comes from the batch seed.
      return res.render('organise/codes-download', { title, d: dashboardView(dash), batch, count: codes.length });
    }
    const publicUrl = deps.config.publicUrl;
    if (form.values.format === 'slips') {
      const qr = await ballotQrDataUrl(ballotUrl(publicUrl, id));
      return res.render('organise/codes-slips', { title, d: dashboardView(dash), slips: slipsView(dash.election, publicUrl, codes, qr) });
    }
    res.render('organise/codes-list', { title, d: dashboardView(dash), slips: slipsView(dash.election, publicUrl, codes) });
  });

  router.post('/organise/elections/:id/codes/csv', async (req, res) => {
    const id = String(req.params.id);
    const form = readBatch(req.body);
    const { codes, title } = await recallCodeBatch(ctx, { electionId: id, organiserId: organiserOf(res).id, ...form });
    res.set('Content-Type', 'text/csv; charset=utf-8');
    res.attachment(codesFileName(title, ctx.now()));
    res.send(codesCsv(codes, ballotUrl(deps.config.publicUrl, id)));
  });

  router.post('/organise/elections/:id/codes/revoke', async (req, res) => {
    const id = String(req.params.id);
    const code = revokeCodeField(req.body);
    if (code.trim() === '') return renderPage(res, id, 400, { errors: { code: 'Type or paste the code you want to withdraw.' } });
    try {
      await revokeCode(ctx, { electionId: id, organiserId: organiserOf(res).id, code });
    } catch (e) {
      // Malformed, mistyped, unknown or already used: say which, beside the field, and keep what was typed.
      if (isVeiltallyError(e) && e.status < 500 && e.code !== 'ElectionNotFound') {
        return renderPage(res, id, e.status, { code, errors: { code: revokeMessage(e.code, e.message) } });
      }
      throw e;
    }
    res.redirect(303, `/organise/elections/${id}/codes?revoked=1`);
  });

  return router;
}

function revokeMessage(code: string, fallback: string): string {
  switch (code) {
    case 'CodeUnknown':
      return 'That code was not issued for this election.';
    default:
      return fallback;
  }
}
