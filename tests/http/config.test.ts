import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { ConfigError, DEFAULTS, isLoopback, parseConfig, usage } from '../../server/http/config.js';

describe('server options', () => {
  it('defaults: loopback, port 8080, ./data, no token', () => {
    const c = parseConfig([], {});
    expect(c).toMatchObject({ host: '127.0.0.1', port: 8080, token: undefined, maxBodyBytes: 64 * 1024 * 1024 });
    expect(c.dataDir).toBe(path.resolve('./data'));
    expect(c.workers).toBe(DEFAULTS.workers);
  });

  it('reads flags (both spellings) and environment variables; flags win', () => {
    const c = parseConfig(
      ['--port', '9000', '--host=0.0.0.0', '--max-body', '2mb', '--solve-timeout', '30s', '--max-stations=5000', '--max-shafts', '12'],
      { SHAFTNET_PORT: '7000', SHAFTNET_TOKEN: 'abcdefgh12', SHAFTNET_DATA: '/tmp/x', SHAFTNET_RATE_LIMIT: '0' },
    );
    expect(c).toMatchObject({
      port: 9000,
      host: '0.0.0.0',
      token: 'abcdefgh12',
      dataDir: '/tmp/x',
      maxBodyBytes: 2 * 1024 * 1024,
      solveTimeoutMs: 30_000,
      maxStations: 5000,
      maxShafts: 12,
      rateLimitPerMinute: 0,
    });
  });

  it('fails fast with a message naming the flag or variable', () => {
    const cases: Array<[string[], Record<string, string>, RegExp]> = [
      [['--port', 'eighty'], {}, /--port must be a whole number/],
      [['--port', '70000'], {}, /--port must be between 0 and 65535/],
      [[], { SHAFTNET_PORT: '-1' }, /SHAFTNET_PORT must be a whole number/],
      [['--token', 'short'], {}, /--token must be at least 8/],
      [['--max-body', 'lots'], {}, /--max-body must be a size/],
      [['--solve-timeout', '0'], {}, /--solve-timeout must be between/],
      [['--frobnicate'], {}, /unknown option "--frobnicate"/],
      [['--port'], {}, /--port needs a value/],
      [['--log-level', 'loud'], {}, /--log-level must be one of/],
    ];
    for (const [argv, env, message] of cases) {
      expect(() => parseConfig(argv, env)).toThrow(ConfigError);
      expect(() => parseConfig(argv, env)).toThrow(message);
    }
  });

  it('knows loopback addresses', () => {
    expect(['127.0.0.1', '127.1.2.3', 'localhost', '::1'].every(isLoopback)).toBe(true);
    expect(['0.0.0.0', '192.168.1.5', '::'].some(isLoopback)).toBe(false);
  });

  it('documents every flag with its environment variable', () => {
    const text = usage();
    for (const flag of ['--port', '--host', '--data', '--token', '--max-body', '--max-stations', '--max-shafts', '--solve-timeout']) {
      expect(text).toContain(flag);
    }
    expect(text).toContain('SHAFTNET_TOKEN');
  });

  it('reads the token from a file (--token-file / SHAFTNET_TOKEN_FILE), keeping it out of the process list', () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-token-'));
    try {
      const file = path.join(dir, 'token');
      fs.writeFileSync(file, 'file-token-123456\n');
      expect(parseConfig(['--token-file', file], {}).token).toBe('file-token-123456');
      expect(parseConfig([], { SHAFTNET_TOKEN_FILE: file }).token).toBe('file-token-123456');
      // A flag wins over the environment, as for every option.
      expect(parseConfig(['--token-file', file], { SHAFTNET_TOKEN: 'env-token-1234567' }).token).toBe('file-token-123456');
      fs.writeFileSync(file, 'short\n');
      expect(() => parseConfig(['--token-file', file], {})).toThrow(/--token-file \(.*token\) must be at least 8/);
      expect(() => parseConfig(['--token-file', path.join(dir, 'missing')], {})).toThrow(/--token-file: cannot read .*missing \(ENOENT\)/);
      expect(() => parseConfig(['--token', 'abcdefgh12', '--token-file', file], {})).toThrow(/not with both --token and --token-file/);
      expect(() => parseConfig([], { SHAFTNET_TOKEN: 'abcdefgh12', SHAFTNET_TOKEN_FILE: file })).toThrow(/not with both SHAFTNET_TOKEN and SHAFTNET_TOKEN_FILE/);
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });

  it('reads --allowed-hosts and --trust-proxy as lists, and refuses what is not a name or an address', () => {
    const c = parseConfig(['--allowed-hosts', 'Shaftnet.Example, 10.0.0.5', '--trust-proxy=127.0.0.1,10.0.0.0/8,loopback'], {});
    expect(c.allowedHosts).toEqual(['shaftnet.example', '10.0.0.5']);
    expect(c.trustProxy).toEqual(['127.0.0.1', '10.0.0.0/8', 'loopback']);
    expect(parseConfig([], { SHAFTNET_ALLOWED_HOSTS: 'a.example', SHAFTNET_TRUST_PROXY: '::1' })).toMatchObject({ allowedHosts: ['a.example'], trustProxy: ['::1'] });
    expect(parseConfig([], {})).toMatchObject({ allowedHosts: [], trustProxy: [] });
    expect(() => parseConfig(['--allowed-hosts', 'http://a.example/'], {})).toThrow(/--allowed-hosts: "http:\/\/a.example\/" is not a host name/);
    expect(() => parseConfig(['--trust-proxy', 'everyone'], {})).toThrow(/--trust-proxy: "everyone" is not an address/);
    expect(() => parseConfig(['--trust-proxy', '10.0.0.0/33'], {})).toThrow(/--trust-proxy/);
    const text = usage();
    for (const flag of ['--token-file', '--allowed-hosts', '--trust-proxy', 'SHAFTNET_TOKEN_FILE', 'SHAFTNET_ALLOWED_HOSTS', 'SHAFTNET_TRUST_PROXY']) expect(text).toContain(flag);
  });

  it('importing server/main.ts starts nothing', async () => {
    const before = process.listenerCount('SIGTERM');
    const main = await import('../../server/main.js');
    expect(typeof main.serveFromArgs).toBe('function');
    expect(process.listenerCount('SIGTERM')).toBe(before);
  });
});
