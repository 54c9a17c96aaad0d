import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { ERROR_CODES } from '../../shared-types/errors.js';

const readme = readFileSync(new URL('../../README.md', import.meta.url), 'utf8');

describe('error registry', () => {
  it.each(Object.entries(ERROR_CODES))('%s is documented in README with its status', (code, info) => {
    const row = readme.split('\n').find((line) => line.startsWith(`| ${code} |`));
    expect(row, `README error table lacks ${code}`).toBeDefined();
    expect(row).toContain(`| ${info.status} |`);
  });

  it('every README code exists in the registry', () => {
    const documented = readme.match(/^\| (SN_[A-Z_]+) \|/gm)?.map((r) => r.slice(2, -2)) ?? [];
    expect(documented.length).toBeGreaterThan(20);
    for (const code of documented) expect(Object.keys(ERROR_CODES)).toContain(code);
  });
});
