import { Router } from 'express';
import { keyFingerprint, publicKeyFromSeed, signingKeyId } from '../../../custody/index.ts';
import { readElection } from '../../../elections/readElection.ts';
import { ElectionNotFound } from '../../../elections/errors.ts';
import { loadGroupLedger } from '../../../elections/ledger.ts';
import { findStatement } from '../../../elections/signDraw.ts';
import type { SigningKey } from '../../../elections/signingKeyRepo.ts';
import { publicSigningKey, publicSigningKeys } from '../../../elections/signingKeys.ts';
import { NotFound } from '../../../errors.ts';
import { canonicalJson } from '../../../mechanism/index.ts';
import { STATEMENT_SCHEMA_URL, statementSchemaText } from '../../../statement/format.ts';
import type { AppDeps } from '../../deps.ts';
import { ledgerPageView } from '../../presenters/ledger.ts';
import { idParam, keyIdParam } from './schema.ts';
import { OPENSSL_STEPS, offlineVerifiers } from './offlineVerifier.ts';

export const KEYS_URL = '/.well-known/veiltally-keys.json';

export function keyDocument(k: SigningKey) {
  return {
    alg: 'Ed25519',
    keyId: k.keyId,
    publicKey: k.publicKey.toString('base64url'),
    fingerprint: keyFingerprint(k.publicKey),
    addedAt: k.addedAt.toISOString().slice(0, 16) + 'Z',
  };
}

/**
 * What anyone can fetch to check a result without trusting this server's pages: the signed
 * statement of every published result, its JSON Schema, the instance's public keys (all of them,
 * old ones included, by key id), a page on how to check, and each member group's privacy ledger.
 */
export function statementsRouter(deps: AppDeps): Router {
  const router = Router();
  const { ctx } = deps;

  router.get('/results/:id/statement.json', async (req, res) => {
    const param = idParam.safeParse(req.params);
    if (!param.success) throw new ElectionNotFound();
    const e = await readElection(ctx, param.data.id);
    // Only a published result's statement is public; a tallied preview's is not.
    if (!e || e.state !== 'published') throw new ElectionNotFound();
    const signed = await findStatement(ctx.knex, e.id);
    if (!signed) throw new ElectionNotFound();
    res.type('application/json');
    res.set('Content-Disposition', `inline; filename="statement-${e.id}.json"`);
    // The statement is sent as the exact bytes that were signed (RFC 8785), inside the envelope.
    res.send(canonicalJson(signed.envelope) + '\n');
  });

  router.get(STATEMENT_SCHEMA_URL, (_req, res) => {
    res.type('application/schema+json').send(statementSchemaText());
  });

  router.get(KEYS_URL, async (_req, res) => {
    const keys = await publicSigningKeys(ctx);
    res.type('application/json').send(JSON.stringify({ keys: keys.map(keyDocument) }, null, 2) + '\n');
  });

  router.get('/keys/:keyId.json', async (req, res) => {
    const param = keyIdParam.safeParse(req.params);
    const key = param.success ? await publicSigningKey(ctx, param.data.keyId) : null;
    if (!key) throw new NotFound('We could not find a signing key with that id.');
    res.type('application/json').set('Content-Disposition', `inline; filename="veiltally-key-${key.keyId}.json"`);
    res.send(JSON.stringify(keyDocument(key), null, 2) + '\n');
  });

  router.get('/keys', async (_req, res) => {
    const activeId = signingKeyId(publicKeyFromSeed(ctx.secrets.signingSeed));
    const keys = (await publicSigningKeys(ctx)).map((k) => ({ ...keyDocument(k), active: k.keyId === activeId }));
    res.render('statements/keys', { title: 'Signing keys', keys, keysUrl: KEYS_URL });
  });

  router.get('/verify', (_req, res) => {
    const { html, node } = offlineVerifiers();
    res.render('statements/verify', {
      title: 'How to check a statement',
      schemaUrl: STATEMENT_SCHEMA_URL,
      keysUrl: KEYS_URL,
      verifier: html,
      nodeVerifier: node,
      opensslSteps: OPENSSL_STEPS,
    });
  });

  // Downloads, never pages of this site: they are meant to be run from the member's own disk, offline.
  for (const which of ['html', 'node'] as const) {
    router.get(`/verify/${offlineVerifiers()[which].name}`, (_req, res) => {
      const f = offlineVerifiers()[which];
      res.type(f.type).set('Content-Disposition', `attachment; filename="${f.name}"`);
      res.send(f.bytes);
    });
  }

  router.get('/groups/:id/ledger', async (req, res) => {
    const param = idParam.safeParse(req.params);
    if (!param.success) throw new NotFound('We could not find that member group.');
    const ledger = await loadGroupLedger(ctx, param.data.id);
    const page = ledgerPageView(ledger);
    res.render('statements/ledger', { title: `Privacy ledger: ${page.groupName}`, page });
  });

  return router;
}
