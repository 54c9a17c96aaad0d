/**
 * Two checks every request passes before the routes see it.
 *
 * Host (DNS rebinding): a page of another site whose name was re-pointed at
 * this server's address would reach it as its own origin; its requests then
 * carry that site's name in `Host`. Only this server's own names are served:
 * the address it is bound to; loopback names (`localhost`, 127.x.x.x, ::1)
 * when bound to loopback or to every address; any IP address when bound to
 * every address (a rebinding needs a name, never a bare address); and the names
 * given with `--allowed-hosts`. Anything else: 421 SN_HOST.
 *
 * Cross-site: a state-changing request (POST, PUT, PATCH, DELETE) must not be
 * one another site's page could send. Where the browser says where it comes
 * from (`Sec-Fetch-Site`, `Origin`), that must be this origin. And it must
 * carry something a form or a plain cross-site fetch cannot: a content type
 * other than the three a form can send (the API takes `application/json`, also
 * for an empty body), an `Authorization` header, or `Sec-Fetch-Site:
 * same-origin`. Anything else: 403 SN_CROSS_SITE.
 */
import net from 'node:net';
import os from 'node:os';
import type { FastifyReply, FastifyRequest } from 'fastify';
import { HttpError } from './errors.js';

/** Lower case, without port, brackets or a trailing dot: "[::1]:8080" → "::1". */
export function hostName(hostHeader: string): string {
  let h = hostHeader.trim().toLowerCase();
  if (h.startsWith('[')) {
    const end = h.indexOf(']');
    h = end > 0 ? h.slice(1, end) : h;
  } else {
    const colon = h.indexOf(':');
    if (colon >= 0 && h.indexOf(':', colon + 1) < 0) h = h.slice(0, colon);
  }
  return h.endsWith('.') ? h.slice(0, -1) : h;
}

function isLoopbackName(h: string): boolean {
  return h === 'localhost' || h === '::1' || /^127\.\d{1,3}\.\d{1,3}\.\d{1,3}$/.test(h);
}

function isWildcard(h: string): boolean {
  return h === '0.0.0.0' || h === '::' || h === '';
}

/**
 * The test a Host name must pass, for a server bound to `listenHost` with the
 * extra names `allowed` (names or addresses, compared without case or port).
 */
export function hostPolicy(listenHost: string, allowed: readonly string[] = []): (host: string) => boolean {
  const bound = hostName(listenHost.includes(':') && !listenHost.startsWith('[') ? `[${listenHost}]` : listenHost);
  const names = new Set<string>(['localhost', ...allowed.map((a) => hostName(a))]);
  if (!isWildcard(bound)) names.add(bound);
  if (isWildcard(bound)) names.add(os.hostname().toLowerCase());
  const loopbackToo = isWildcard(bound) || isLoopbackName(bound);
  return (host) => {
    if (names.has(host)) return true;
    if (loopbackToo && isLoopbackName(host)) return true;
    return isWildcard(bound) && net.isIP(host) !== 0;
  };
}

/** onRequest hook: 421 SN_HOST for a Host header that is not one of ours. */
export function hostHook(allows: (host: string) => boolean) {
  return async (req: FastifyRequest, _reply: FastifyReply): Promise<void> => {
    const raw = req.host; // from X-Forwarded-Host when the request came through a trusted proxy
    const name = typeof raw === 'string' ? hostName(raw) : '';
    if (name !== '' && allows(name)) return;
    const shown = typeof raw === 'string' && raw !== '' ? `"${raw.slice(0, 100)}"` : 'no Host header';
    const message = `this server does not answer to ${shown}; its administrator can add the name with --allowed-hosts`;
    throw new HttpError('SN_HOST', message, [{ code: 'SN_HOST', pointer: '', message }]);
  };
}

/** Methods that change state. */
const UNSAFE = new Set(['POST', 'PUT', 'PATCH', 'DELETE']);

/** Content types an HTML form or a cross-site fetch without a preflight can send (their essence). */
const FORM_TYPES = new Set(['application/x-www-form-urlencoded', 'multipart/form-data', 'text/plain']);

function crossSite(message: string): HttpError {
  return new HttpError('SN_CROSS_SITE', message, [{ code: 'SN_CROSS_SITE', pointer: '', message }]);
}

/** The reason a request must be refused as cross-site, or null. Exported for the tests. */
export function crossSiteReason(req: Pick<FastifyRequest, 'method' | 'headers' | 'host'>): string | null {
  if (!UNSAFE.has(req.method)) return null;
  const site = req.headers['sec-fetch-site'];
  if (site !== undefined && site !== 'same-origin' && site !== 'none') {
    return `a ${req.method} from another site (Sec-Fetch-Site: ${String(site).slice(0, 40)}) is refused`;
  }
  const origin = req.headers.origin;
  if (origin !== undefined) {
    let originHost: string | null = null;
    try {
      const u = new URL(origin);
      originHost = u.host;
      if (u.protocol !== 'http:' && u.protocol !== 'https:') originHost = null;
    } catch {
      originHost = null;
    }
    let ownHost: string | null = null;
    try {
      ownHost = new URL(`${origin.startsWith('https:') ? 'https' : 'http'}://${req.host}`).host;
    } catch {
      ownHost = null;
    }
    if (originHost === null || ownHost === null || originHost !== ownHost) {
      return `a ${req.method} from another origin (Origin: ${origin.slice(0, 100)}) is refused`;
    }
  }
  const type = req.headers['content-type'];
  const essence = typeof type === 'string' ? type.split(';')[0].trim().toLowerCase() : '';
  if (essence !== '' && !FORM_TYPES.has(essence)) return null;
  // A body in a form's type (or none) is refused by the JSON reader as it always was (400 SN_JSON).
  if (hasBody(req)) return NOT_JSON;
  if (req.headers.authorization !== undefined) return null;
  if (site === 'same-origin') return null;
  return `a ${req.method} must be sent with "Content-Type: application/json", also when it has no body (a page of another site cannot send that without asking first)`;
}

/** The answer for a body sent in a form's content type: what the JSON reader says (400 SN_JSON). */
const NOT_JSON = 'send the body as JSON with "Content-Type: application/json"';

function hasBody(req: Pick<FastifyRequest, 'headers'>): boolean {
  const length = req.headers['content-length'];
  return req.headers['transfer-encoding'] !== undefined || (length !== undefined && length !== '0');
}

/**
 * onRequest hook: 403 SN_CROSS_SITE for a state-changing request another site
 * could have sent (400 SN_JSON when it carries a body that is not JSON).
 */
export function crossSiteHook() {
  return async (req: FastifyRequest, _reply: FastifyReply): Promise<void> => {
    const reason = crossSiteReason(req);
    if (reason === NOT_JSON) throw new HttpError('SN_JSON', reason, [{ code: 'SN_JSON', pointer: '', message: reason }]);
    if (reason !== null) throw crossSite(reason);
  };
}
