import { spawnSync } from 'node:child_process';
import crypto from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import vm from 'node:vm';
import canonicalize from 'canonicalize';
import { describe, expect, it } from 'vitest';
import request from 'supertest';
import { publicKeyFromSeed } from '../../../src/custody/index.ts';
import type { StatementEnvelope } from '../../../src/mechanism/index.ts';
import { engines } from '../../helpers/databases.ts';
import { useMemberSuite } from '../../helpers/memberSuite.ts';

interface CheckResult {
  lines: { ok: boolean; text: string }[];
  passed: boolean;
  summary: { title: string; winners: string[]; epsilon: string; drawnAt: string } | null;
}
interface Core {
  veiltallyCheck(statement: string, key: string | null, election: string | null): Promise<CheckResult>;
  canonicalize(value: unknown): string;
}

/** The check script exactly as served inside the download, run in a fresh context with only WebCrypto and the text codecs. */
function coreOf(html: string): Core {
  const source = /<script id="veiltally-verify-core">([\s\S]*?)<\/script>/.exec(html)?.[1];
  expect(source, 'the download carries its check script').toBeTruthy();
  const context = vm.createContext({ crypto: globalThis.crypto, TextEncoder, atob, Uint8Array, JSON });
  vm.runInContext(`${source!}\nthis.api = { veiltallyCheck, canonicalize };`, context);
  return (context as unknown as { api: Core }).api;
}

/**
 * /verify offers a single-file checker a member saves and opens offline; the page shows the
 * SHA-256 of the exact bytes served. The file's script is run here as served: a genuine statement
 * passes, the same statement pretty-printed (as a browser shows it) passes, and one changed value,
 * another key, no key or another election fails. Its RFC 8785 function is compared with the
 * `canonicalize` package on the RFC's own sample values (RFC 8785 §3.2.2.3 and Appendix B).
 */
describe.each(engines)('the offline checker /verify offers [%s]', (engine) => {
  const s = useMemberSuite(engine);

  async function downloaded(name = 'veiltally-verify.html'): Promise<{ html: string; sha256: string; disposition: string }> {
    const res = await request(s.app)
      .get(`/verify/${name}`)
      .buffer(true)
      .parse((r, done) => {
        const chunks: Buffer[] = [];
        r.on('data', (c: Buffer) => chunks.push(c));
        r.on('end', () => done(null, Buffer.concat(chunks)));
      });
    expect(res.status).toBe(200);
    const bytes = res.body as Buffer;
    return {
      html: bytes.toString('utf8'),
      sha256: crypto.createHash('sha256').update(bytes).digest('hex'),
      disposition: String(res.headers['content-disposition']),
    };
  }

  it('is a download whose SHA-256 /verify shows, and /verify says how to run it and the command without npx from the registry', async () => {
    const file = await downloaded();
    expect(file.disposition).toBe('attachment; filename="veiltally-verify.html"');
    const page = (await request(s.app).get('/verify').expect(200)).text;
    expect(page).toContain('<a href="/verify/veiltally-verify.html" download>veiltally-verify.html</a>');
    expect(/<code class="fingerprint" id="verifier-sha256">([0-9a-f]{64})<\/code>/.exec(page)?.[1]).toBe(file.sha256);
    expect(page).toContain('not published on the public package registry');
    expect(page).toContain('What it proves, and what it does not');
    // The checker itself asks no server anything: no address, no fetch, no external script or style.
    expect(file.html).not.toMatch(/https?:\/\/|fetch\(|XMLHttpRequest|<script[^>]+src=|<link /);
  });

  it('passes a genuine statement, in its published bytes and pretty-printed, and fails every tampering', async () => {
    const d = await s.decided([[0, 1], [0], [2], [0, 3]], { epsilon: '1', codes: 4 });
    const text = (await request(s.app).get(`/results/${d.f.id}/statement.json`).expect(200)).text;
    const envelope = JSON.parse(text) as StatementEnvelope;
    const key = (await request(s.app).get(`/keys/${envelope.statement.keyId}.json`).expect(200)).text;
    const core = coreOf((await downloaded()).html);

    const genuine = await core.veiltallyCheck(text, key, d.f.id);
    expect(genuine.lines.filter((l) => !l.ok)).toEqual([]);
    expect(genuine.passed).toBe(true);
    expect(genuine.summary).toEqual({
      title: envelope.statement.electionTitle,
      winners: d.winners,
      epsilon: '1',
      drawnAt: envelope.statement.drawnAt,
    });

    const pretty = JSON.stringify(envelope, null, 2);
    expect(pretty).not.toBe(text.trimEnd());
    const laidOut = await core.veiltallyCheck(pretty, key, d.f.id);
    expect(laidOut.passed).toBe(true);
    expect(laidOut.lines.map((l) => l.text).join('\n')).toContain('laid out differently');

    const fails = async (statement: string, k: string | null, election: string | null, pattern: RegExp): Promise<void> => {
      const r = await core.veiltallyCheck(statement, k, election);
      expect(r.passed).toBe(false);
      expect(
        r.lines
          .filter((l) => !l.ok)
          .map((l) => l.text)
          .join('\n'),
      ).toMatch(pattern);
    };
    const loser = envelope.statement.options.find((o) => !d.winners.includes(o))!;
    const changed = JSON.parse(pretty) as StatementEnvelope;
    changed.statement.released.winners = [loser];
    await fails(JSON.stringify(changed, null, 2), key, null, /signature does NOT match/);
    const otherEpsilon = JSON.parse(text) as StatementEnvelope;
    otherEpsilon.statement.mechanism.epsilon = '0.5';
    await fails(JSON.stringify(otherEpsilon), key, null, /signature does NOT match/);
    const wrongKey = JSON.stringify({ alg: 'Ed25519', publicKey: publicKeyFromSeed(Buffer.alloc(32, 7)).toString('base64url') });
    await fails(text, wrongKey, null, /not the key the statement names[\s\S]*signature does NOT match/);
    await fails(text, null, null, /NOT checked: no key/);
    await fails(text, key, '00000000-0000-4000-8000-000000000000', /not 00000000-0000-4000-8000-000000000000/);
    await fails('{"statement":', key, null, /not JSON/);
    await fails('{"statement":{}}', key, null, /not a signed statement/);
  });

  it('canonicalises exactly as the canonicalize package does, on RFC 8785 sample values', async () => {
    const core = coreOf((await downloaded()).html);
    // RFC 8785 §3.2.2 sample values and the §3.2.3 sorting example (keys in UTF-16 code-unit order), as recalled
    // from the RFC rather than copied from it; the comparison with the package does not depend on the recall.
    const samples: unknown[] = [
      {
        // eslint-disable-next-line no-loss-of-precision -- the RFC's sample is written with more digits than a double holds
        numbers: [333333333.33333329, 1e30, 4.5, 2e-3, 0.000000000000000000000000001],
        string: '€$\u000f\nA\'B"\\\\"/',
        literals: [null, true, false],
      },
      {
        '\u20ac': 'Euro Sign',
        '\r': 'Carriage Return',
        '\ufb33': 'Hebrew Letter Dalet With Dagesh',
        '1': 'One',
        '\ud83d\ude00': 'Emoji: Grinning Face',
        '\u0080': 'Control',
        '\u00f6': 'Latin Small Letter O With Diaeresis',
      },
      // eslint-disable-next-line no-loss-of-precision -- 2^53 + 1 on purpose: it serialises as 2^53
      [-0, 1e21, 1e-7, 9007199254740993, 'Ärger', { b: [], a: {} }],
    ];
    for (const value of samples) expect(core.canonicalize(value)).toBe(canonicalize(value));
    // RFC 8785 §3.2.2.3 (ECMAScript Number serialisation): the RFC's output for its sample numbers; 1e21 as "1e+21", -0 as "0".
    // eslint-disable-next-line no-loss-of-precision -- as above
    expect(core.canonicalize([333333333.33333329, 1e30, 4.5, 2e-3, 1e-27])).toBe('[333333333.3333333,1e+30,4.5,0.002,1e-27]');
    expect(core.canonicalize([1e21, -0])).toBe('[1e+21,0]');
  });

  it('the Node twin runs with plain node from another folder: exit 0 on the pretty-printed statement, 1 when tampered, 2 for a missing file', async () => {
    const d = await s.decided([[0], [1, 2], [0, 3]], { epsilon: '0.5', codes: 3 });
    const text = (await request(s.app).get(`/results/${d.f.id}/statement.json`).expect(200)).text;
    const envelope = JSON.parse(text) as StatementEnvelope;
    const key = (await request(s.app).get(`/keys/${envelope.statement.keyId}.json`).expect(200)).text;
    const file = await downloaded('veiltally-verify.mjs');
    expect(file.disposition).toBe('attachment; filename="veiltally-verify.mjs"');
    const page = (await request(s.app).get('/verify').expect(200)).text;
    expect(/<code class="fingerprint" id="node-verifier-sha256">([0-9a-f]{64})<\/code>/.exec(page)?.[1]).toBe(file.sha256);
    // The same check script as the page's, word for word.
    const pageCore = /<script id="veiltally-verify-core">([\s\S]*?)<\/script>/.exec((await downloaded()).html)![1]!.trim();
    expect(file.html).toContain(pageCore);

    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'vt-node-check-'));
    try {
      fs.writeFileSync(path.join(dir, 'veiltally-verify.mjs'), file.html);
      fs.writeFileSync(path.join(dir, 'statement.json'), JSON.stringify(envelope, null, 2));
      fs.writeFileSync(path.join(dir, 'key.json'), key);
      const tampered = JSON.parse(text) as StatementEnvelope;
      tampered.statement.released.winners = [envelope.statement.options.find((o) => !d.winners.includes(o))!];
      fs.writeFileSync(path.join(dir, 'tampered.json'), JSON.stringify(tampered, null, 2));
      // Plain node in a folder with no node_modules: no loader, no project, no network needed.
      const run = (...args: string[]) =>
        spawnSync(process.execPath, ['veiltally-verify.mjs', ...args], { cwd: dir, encoding: 'utf8', env: { PATH: process.env.PATH ?? '' } });
      const good = run('statement.json', '--key', 'key.json', '--election', d.f.id);
      expect(good.stdout).toContain('All checks passed.');
      expect(good.stdout).not.toContain('FAIL');
      expect(good.status).toBe(0);
      const bad = run('tampered.json', '--key', 'key.json');
      expect(bad.stdout).toMatch(/FAIL {2}The Ed25519 signature does NOT match/);
      expect(bad.status).toBe(1);
      expect(run('statement.json').status).toBe(1); // no key: the signer is not checked, so it does not pass
      expect(run('missing.json', '--key', 'key.json').status).toBe(2);
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });

  it('the OpenSSL commands /verify shows, run word for word, pass the downloaded statement and fail a changed one', async () => {
    expect(spawnSync('openssl', ['version'], { encoding: 'utf8' }).stdout).toMatch(/^OpenSSL [3-9]\./);
    const d = await s.decided([[0, 2], [1], [0]], { epsilon: '1', codes: 3 });
    const text = (await request(s.app).get(`/results/${d.f.id}/statement.json`).expect(200)).text;
    const envelope = JSON.parse(text) as StatementEnvelope;
    const keyText = (await request(s.app).get(`/keys/${envelope.statement.keyId}.json`).expect(200)).text;
    const keyDoc = JSON.parse(keyText) as { fingerprint: string };
    const page = (await request(s.app).get('/verify').expect(200)).text;
    const list = /<ol class="steps" id="openssl-steps">([\s\S]*?)<\/ol>/.exec(page)?.[1];
    expect(list, '/verify lists the OpenSSL commands').toBeTruthy();
    const unescape = (t: string) =>
      t.replace(/&lt;/g, '<').replace(/&gt;/g, '>').replace(/&#34;/g, '"').replace(/&#39;/g, "'").replace(/&amp;/g, '&');
    const commands = [...list!.matchAll(/<pre class="commands"[^>]*><code>([\s\S]*?)<\/code><\/pre>/g)].map((m) => unescape(m[1]!));
    expect(commands).toHaveLength(6);
    expect(commands.join('\n')).toContain('openssl pkeyutl -verify -pubin -inkey key.pem -rawin -in signed.json -sigfile signature.bin');

    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'vt-openssl-check-'));
    const runAll = (statement: string) => {
      fs.writeFileSync(path.join(dir, 'statement.json'), statement);
      fs.writeFileSync(path.join(dir, 'key.json'), keyText);
      // Only the tools the page names: a shell, sed, tr, printf, grep, cat and openssl; no node, no project.
      return spawnSync('/bin/sh', ['-c', commands.join('\n')], { cwd: dir, encoding: 'utf8', env: { PATH: '/usr/bin:/bin' } });
    };
    try {
      const good = runAll(text);
      expect(good.stderr).toBe('');
      expect(good.stdout).toContain('Signature Verified Successfully');
      expect(good.status).toBe(0);
      // The bytes OpenSSL checked are the statement's RFC 8785 form, as the canonicalize package makes it.
      expect(fs.readFileSync(path.join(dir, 'signed.json'), 'utf8')).toBe(canonicalize(envelope.statement));
      expect(fs.statSync(path.join(dir, 'signature.bin')).size).toBe(64);
      // The fingerprint OpenSSL prints is the one the key file and /keys publish.
      expect(good.stdout).toContain(keyDoc.fingerprint.replace(/ /g, ''));
      expect(good.stdout).toContain(`"electionId":"${d.f.id}"`);
      expect(good.stdout).toContain(`"winners":${JSON.stringify(d.winners)}`);

      const tampered = JSON.parse(text) as StatementEnvelope;
      tampered.statement.released.winners = [envelope.statement.options.find((o) => !d.winners.includes(o))!];
      const bad = runAll(canonicalize(tampered) + '\n');
      expect(bad.stdout).not.toContain('Signature Verified Successfully');
      expect(bad.status).not.toBe(0);
      // As the page says: a re-laid-out copy fails this route (OpenSSL cannot canonicalise), though not the checkers.
      expect(runAll(JSON.stringify(envelope, null, 2)).status).not.toBe(0);
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });

  it('the Node twin passes any JSON rendering of the statement: other spacing and every object’s keys in another order', async () => {
    const d = await s.decided([[1], [0, 1], [2]], { epsilon: '2', codes: 3 });
    const text = (await request(s.app).get(`/results/${d.f.id}/statement.json`).expect(200)).text;
    const envelope = JSON.parse(text) as StatementEnvelope;
    const key = (await request(s.app).get(`/keys/${envelope.statement.keyId}.json`).expect(200)).text;
    const reordered = (v: unknown): unknown =>
      Array.isArray(v)
        ? v.map(reordered)
        : v && typeof v === 'object'
          ? Object.fromEntries(
              Object.entries(v)
                .reverse()
                .map(([k, x]) => [k, reordered(x)]),
            )
          : v;
    const rendering = JSON.stringify(reordered(envelope), null, '\t').replace(/":/g, '" :  ').replace(/\n/g, '\r\n');
    expect(rendering.indexOf('"statement"')).toBeLessThan(rendering.indexOf('"signature"'));
    const file = await downloaded('veiltally-verify.mjs');
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'vt-node-render-'));
    try {
      fs.writeFileSync(path.join(dir, 'veiltally-verify.mjs'), file.html);
      fs.writeFileSync(path.join(dir, 'statement.json'), rendering);
      fs.writeFileSync(path.join(dir, 'key.json'), key);
      const run = spawnSync(process.execPath, ['veiltally-verify.mjs', 'statement.json', '--key', 'key.json', '--election', d.f.id], {
        cwd: dir,
        encoding: 'utf8',
        env: { PATH: process.env.PATH ?? '' },
      });
      expect(run.stdout).toContain('laid out differently');
      expect(run.stdout).toContain('All checks passed.');
      expect(run.status).toBe(0);
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });
});
