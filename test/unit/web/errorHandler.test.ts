import { describe, expect, it } from 'vitest';
import express from 'express';
import request from 'supertest';
import { Writable } from 'node:stream';
import { createLogger } from '../../../src/log.ts';
import { VeiltallyError } from '../../../src/errors.ts';
import { errorHandler } from '../../../src/web/middleware/errorHandler.ts';
import { VIEWS_DIR } from '../../../src/web/paths.ts';

class StorageDown extends VeiltallyError {
  readonly code = 'StorageDown';
  override readonly status = 503;
}

/** The real logger (with its redaction list) writing into an array, plus a tiny app using the one error handler. */
function appWithLog() {
  const lines: Record<string, unknown>[] = [];
  const sink = new Writable({
    write(chunk, _enc, done) {
      lines.push(JSON.parse(String(chunk)));
      done();
    },
  });
  const app = express();
  app.set('view engine', 'ejs');
  app.set('views', VIEWS_DIR);
  app.locals.siteName = 'Veiltally';
  // The same body limits as createApp.
  app.use(express.urlencoded({ extended: false, limit: '512kb', parameterLimit: 5000 }));
  app.post('/form', (_req, res) => res.send('read'));
  app.get('/down', () => {
    throw new StorageDown('The store is not answering. Try again in a moment.');
  });
  app.use(errorHandler(createLogger('info', sink)));
  return { app, lines };
}

describe('the one error handler', () => {
  it('logs which typed error a server failure was, not a censored field', async () => {
    const { app, lines } = appWithLog();
    const res = await request(app).get('/down');
    expect(res.status).toBe(503);
    const logged = lines.find((l) => l.msg === 'server failure');
    expect(logged).toMatchObject({ errorCode: 'StorageDown', route: '/down' });
  });

  // body-parser's client errors are the sender's fault (RFC 9110 §15.5): never a 500 "something went wrong on our side".
  it('answers a form with too many fields with 413', async () => {
    const { app, lines } = appWithLog();
    const body = Array.from({ length: 5001 }, (_, i) => `f${i}=x`).join('&');
    const res = await request(app).post('/form').type('form').send(body);
    expect(res.status).toBe(413);
    expect(res.text).toContain('That form was larger than we accept');
    expect(lines.filter((l) => l.msg === 'unexpected error')).toEqual([]);
  });

  it('answers a form in a charset we do not read with 415 and a plain message', async () => {
    const { app, lines } = appWithLog();
    const res = await request(app).post('/form').set('Content-Type', 'application/x-www-form-urlencoded; charset=koi8-r').send('a=1');
    expect(res.status).toBe(415);
    expect(res.text).toContain('We could not read that form');
    expect(res.headers['cache-control']).toBe('no-store');
    expect(lines.filter((l) => l.msg === 'unexpected error')).toEqual([]);
  });
});
