/**
 * Where a postgres:// URL points, in words for messages and logs, without the
 * user or the password (no driver needed: main.ts names the library with it).
 */

/** "host:port" (or "socket directory, port N") of a connection string, without user or password. */
export function describeTarget(connectionString: string): string {
  let url: URL;
  try {
    // A URL without a host (postgres://user@/db?host=/run/postgresql) is valid for the driver, not for URL.
    url = new URL(connectionString.replace(/^(postgres(?:ql)?:\/\/(?:[^/@]*@)?)\//, '$1localhost/'));
  } catch {
    return 'an address that is not a postgres:// URL';
  }
  const hostParam = url.searchParams.get('host');
  const port = url.port || url.searchParams.get('port') || '5432';
  const db = decodeURIComponent(url.pathname.replace(/^\//, '')) || '(default database)';
  const host = hostParam ?? (url.hostname || 'localhost');
  return host.startsWith('/') ? `socket directory ${host}, port ${port}, database ${db}` : `${host}:${port}, database ${db}`;
}
