import { describe, expect, it } from 'vitest';
import { parseConfig } from '../config';

const SECRET = 'a'.repeat(64);

describe('parseConfig', () => {
  it('fills the loopback defaults outside production, without a secret', () => {
    const c = parseConfig({});
    expect(c.NODE_ENV).toBe('development');
    expect(c.AUTH_SECRET).toBeUndefined();
    expect(c.JOB_EXPIRE_SECONDS).toBe(900);
    expect(c.JOB_QUEUE_SCHEMA).toBe('pgboss');
    expect(c.HEIGHTLIGHT_ACCESS_CACHE).toBe('on');
    expect(c.S3_PUBLIC_ENDPOINT).toBeUndefined();
  });

  it('reads empty variables (as in an env file) as not set', () => {
    const c = parseConfig({ AUTH_SECRET: '', JOB_EXPIRE_SECONDS: '', JOB_QUEUE_SCHEMA: '', S3_PUBLIC_ENDPOINT: '' });
    expect(c.AUTH_SECRET).toBeUndefined();
    expect(c.JOB_EXPIRE_SECONDS).toBe(900);
    expect(c.JOB_QUEUE_SCHEMA).toBe('pgboss');
  });

  it('names each malformed variable', () => {
    expect(() => parseConfig({ JOB_EXPIRE_SECONDS: 'soon' })).toThrow(/JOB_EXPIRE_SECONDS/);
    expect(() => parseConfig({ JOB_QUEUE_SCHEMA: 'Queue; drop' })).toThrow(/JOB_QUEUE_SCHEMA: must be a lower-case SQL name/);
    expect(() => parseConfig({ HEIGHTLIGHT_ACCESS_CACHE: 'maybe' })).toThrow(/HEIGHTLIGHT_ACCESS_CACHE/);
    expect(parseConfig({ JOB_EXPIRE_SECONDS: '30', JOB_QUEUE_SCHEMA: 'fault_test_1' })).toMatchObject({ JOB_EXPIRE_SECONDS: 30, JOB_QUEUE_SCHEMA: 'fault_test_1' });
  });

  it('refuses production without a session secret of at least 32 characters, and says how to make one', () => {
    expect(() => parseConfig({ NODE_ENV: 'production' })).toThrow(/AUTH_SECRET: production needs a secret of at least 32 characters.*openssl rand -hex 32/);
    expect(() => parseConfig({ NODE_ENV: 'production', AUTH_SECRET: 'short' })).toThrow(/AUTH_SECRET/);
    expect(parseConfig({ NODE_ENV: 'production', AUTH_SECRET: SECRET }).AUTH_SECRET).toBe(SECRET);
  });

  it("refuses production against a remote bucket with the local test store's keys", () => {
    const remote = { NODE_ENV: 'production', AUTH_SECRET: SECRET, S3_ENDPOINT: 'https://s3.example.org' };
    expect(() => parseConfig(remote)).toThrow(/S3_ACCESS_KEY_ID, S3_SECRET_ACCESS_KEY/);
    expect(parseConfig({ ...remote, S3_ACCESS_KEY_ID: 'AKEXAMPLE', S3_SECRET_ACCESS_KEY: 'example-secret' }).S3_ENDPOINT).toBe('https://s3.example.org');
    // the embedded loopback store (npm start with NODE_ENV=production) keeps its defaults
    expect(parseConfig({ NODE_ENV: 'production', AUTH_SECRET: SECRET }).S3_ACCESS_KEY_ID).toBe('S3RVER');
  });

  it('lists every problem at once', () => {
    const message = (() => {
      try {
        parseConfig({ NODE_ENV: 'production', S3_ENDPOINT: 'https://s3.example.org' });
      } catch (e) {
        return (e as Error).message;
      }
      return '';
    })();
    expect(message.split('\n')).toHaveLength(3);
  });
});
