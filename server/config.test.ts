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

  it('reads the key of host tokens as 64 hex digits or base64 of 32 bytes, and names it when it is neither', () => {
    const hex = '00112233445566778899aabbccddeeff00112233445566778899aabbccddeeff';
    expect(loadConfig({ ...base, PLEAT_SECRET_KEY: hex }).secretKey).toEqual(Buffer.from(hex, 'hex'));
    expect(loadConfig({ ...base, PLEAT_SECRET_KEY: Buffer.from(hex, 'hex').toString('base64') }).secretKey).toEqual(Buffer.from(hex, 'hex'));
    // Under test and in production no key is made up: connecting a host is then refused.
    expect(loadConfig(base).secretKey).toBeNull();
    expect(() => loadConfig({ ...base, PLEAT_SECRET_KEY: 'abc123' })).toThrow(/PLEAT_SECRET_KEY: must be 32 bytes/);
    expect(() => loadConfig({ ...base, PLEAT_SECRET_KEY: hex.slice(2) })).toThrow(/PLEAT_SECRET_KEY/);
  });
});
