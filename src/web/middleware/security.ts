import helmet from 'helmet';
import type { RequestHandler } from 'express';
import { Forbidden } from '../errors.ts';

/**
 * Headers per OWASP ASVS 5.0 §3.4: a CSP that allows no inline script, no referrer to other sites,
 * HSTS only when the site is served over TLS.
 */
export function securityHeaders(secure: boolean): RequestHandler {
  const headers = helmet({
    contentSecurityPolicy: {
      useDefaults: false,
      directives: {
        'default-src': ["'self'"],
        'script-src': ["'self'"],
        'style-src': ["'self'"],
        'img-src': ["'self'", 'data:'],
        'form-action': ["'self'"],
        'frame-ancestors': ["'none'"],
        'base-uri': ["'none'"],
        'object-src': ["'none'"],
        ...(secure ? { 'upgrade-insecure-requests': [] } : {}),
      },
    },
    // same-origin, not no-referrer: other sites still get no Referer, and our own form posts keep a
    // real Origin header. Under no-referrer a browser sends `Origin: null` with every form post
    // (WHATWG Fetch, "append a request `Origin` header"), which sameOriginOnly refuses.
    referrerPolicy: { policy: 'same-origin' },
    strictTransportSecurity: secure ? { maxAge: 31_536_000, includeSubDomains: true } : false,
    crossOriginEmbedderPolicy: false,
    // Matches frame-ancestors 'none' for browsers that only read the older header.
    xFrameOptions: { action: 'deny' },
  });
  return (req, res, next) => {
    // No page needs these browser features (W3C Permissions Policy); helmet does not set this header.
    res.set('Permissions-Policy', 'camera=(), microphone=(), geolocation=(), payment=(), usb=(), fullscreen=()');
    headers(req, res, next);
  };
}

/** Pages that show a code, a receipt or a ballot must never be stored by a browser or proxy. */
export const noStore: RequestHandler = (_req, res, next) => {
  res.set('Cache-Control', 'no-store');
  res.set('Pragma', 'no-cache');
  next();
};

/**
 * A second CSRF line beside the token (OWASP CSRF Prevention Cheat Sheet, "Verifying origin with
 * standard headers" and Fetch Metadata): refuse state changes that a browser says came from another
 * site, or from an opaque origin (`Origin: null`). The Origin is compared with the configured public origin (PUBLIC_URL), so a proxy that
 * rewrites Host or sets X-Forwarded-Host does not break forms; a match with the Host the browser
 * sent is also accepted, since a forged cross-site request carries its own site's Origin.
 */
export function sameOriginOnly(publicUrl: string): RequestHandler {
  const publicOrigin = new URL(publicUrl).origin;
  return (req, _res, next) => {
    if (req.method === 'GET' || req.method === 'HEAD' || req.method === 'OPTIONS') return next();
    const site = req.get('sec-fetch-site');
    if (site && site !== 'same-origin' && site !== 'none') {
      return next(new Forbidden('This form was sent from another site, so we did not act on it.'));
    }
    const origin = req.get('origin');
    // A sandboxed frame, a data: or file: page, or a post redirected across origins sends
    // `Origin: null`: a page of ours never does (see the referrer policy above).
    if (origin === 'null') {
      return next(new Forbidden('This form came from a page with no address of its own, so we did not act on it.'));
    }
    if (origin) {
      let parsed: URL;
      try {
        parsed = new URL(origin);
      } catch {
        return next(new Forbidden('This form came with an unreadable origin, so we did not act on it.'));
      }
      if (parsed.origin !== publicOrigin && parsed.host !== req.get('host')) {
        return next(new Forbidden('This form was sent from another site, so we did not act on it.'));
      }
    }
    next();
  };
}

/**
 * Node answers some malformed requests itself before Express sees them (an address or headers over
 * its 16 KiB limit: 431; unparseable HTTP: 400; a request slower than the server's timeouts: 408), with no headers at all. Give those answers the same
 * protective headers as every page. Wire with `server.on('clientError', answerClientError)`.
 */
export function answerClientError(err: NodeJS.ErrnoException, socket: import('node:stream').Duplex): void {
  if (err.code === 'ECONNRESET' || !socket.writable) return void socket.destroy();
  const tooLarge = err.code === 'HPE_HEADER_OVERFLOW';
  // The server's header or request timeout (src/web/server.ts): the request took too long to arrive.
  const tooSlow = err.code === 'ERR_HTTP_REQUEST_TIMEOUT' || err.code === 'HPE_HEADER_TIMEOUT';
  const status = tooLarge ? '431 Request Header Fields Too Large' : tooSlow ? '408 Request Timeout' : '400 Bad Request';
  const body = tooLarge
    ? 'The address or the headers of that request were too long.\n'
    : tooSlow
      ? 'That request took too long to arrive, so the connection was closed. Send it again.\n'
      : 'That request could not be read.\n';
  socket.end(
    [
      `HTTP/1.1 ${status}`,
      'Content-Type: text/plain; charset=utf-8',
      `Content-Length: ${Buffer.byteLength(body)}`,
      'Connection: close',
      "Content-Security-Policy: default-src 'none'; script-src 'self'; frame-ancestors 'none'; base-uri 'none'; form-action 'self'",
      'X-Content-Type-Options: nosniff',
      'X-Frame-Options: DENY',
      'Referrer-Policy: same-origin',
      'Permissions-Policy: camera=(), microphone=(), geolocation=(), payment=(), usb=(), fullscreen=()',
      '',
      body,
    ].join('\r\n'),
  );
}
