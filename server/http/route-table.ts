/**
 * Every route the app registered (collected by an onRoute hook in buildApp):
 * for the 405 answer (which methods a path has) and for the tests that walk
 * every route. Patterns are Fastify's: `:name` is one path part, `*` the rest.
 */
import type { RouteOptions } from 'fastify';

export interface RegisteredRoute {
  readonly method: string;
  readonly url: string;
  /** Registered with `config: { public: true }` (served without the team token). */
  readonly public: boolean;
}

function patternRegExp(url: string): RegExp {
  const parts = url.split('/').map((p) => {
    if (p === '*') return '.*';
    if (p.startsWith(':')) return '[^/]+';
    return p.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
  });
  return new RegExp(`^${parts.join('/')}$`);
}

export class RouteTable {
  private readonly routes: Array<{ options: RouteOptions; methods: string[]; re: RegExp }> = [];

  /** Called by the onRoute hook; reads `config.public` later, after every hook has run. */
  add(options: RouteOptions): void {
    const methods = ([] as string[]).concat(options.method);
    this.routes.push({ options, methods, re: patternRegExp(options.url) });
  }

  list(): RegisteredRoute[] {
    return this.routes.flatMap((r) => r.methods.map((method) => ({ method, url: r.options.url, public: r.options.config?.public === true })));
  }

  /**
   * Methods registered for a decoded path, the catch-all `/*` of the client's
   * files left out (it would claim every path for GET).
   */
  methodsFor(path: string): string[] {
    const found = new Set<string>();
    for (const r of this.routes) {
      if (r.options.url === '/*') continue;
      if (r.re.test(path)) for (const m of r.methods) found.add(m);
    }
    return [...found].sort();
  }
}
