// Server settings from the environment: bad numbers are refused with the variable's name.
import { describe, expect, it } from 'vitest';
import { loadConfig } from './config';

const base = { PLEAT_JWT_SECRET: 'test-secret', PLEAT_ENV: 'test' };

describe('loadConfig', () => {
  it('takes defaults for unset and empty variables', () => {
    const c = loadConfig({ ...base, PLEAT_PORT: '' });
    expect(c.port).toBe(4180);
    expect(c.login).toEqual({ windowMs: 15 * 60_000, limit: 10 });
  });

  it('reads numbers that are whole values', () => {
    expect(loadConfig({ ...base, PLEAT_PORT: '8080', PLEAT_MAX_REPORT_MB: '1.5' })).toMatchObject({ port: 8080, maxReportBytes: 1.5 * 1024 * 1024 });
  });

  it('names every variable that is not a finite number', () => {
    expect(() => loadConfig({ ...base, PLEAT_PORT: '12abc', PLEAT_DB_POOL: 'Infinity' })).toThrow(
      'server settings: PLEAT_PORT: not a number: 12abc; PLEAT_DB_POOL: not a number: Infinity',
    );
  });
});
