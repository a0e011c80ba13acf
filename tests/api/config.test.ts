import { describe, expect, it } from 'vitest';
import { ConfigError, loadConfig } from '../../src/config.js';

describe('configuration', () => {
  it('defaults to the embedded back end on localhost:3000 with data in ./.fulcrum', () => {
    const c = loadConfig({});
    expect(c).toMatchObject({
      PORT: 3000,
      HOST: '127.0.0.1',
      FULCRUM_DATA_DIR: './.fulcrum',
      FULCRUM_BODY_LIMIT_BYTES: 16 * 1024 * 1024,
      FULCRUM_UPLOAD_LIMIT_BYTES: 1024 * 1024 * 1024,
      FULCRUM_RATE_LIMIT_MAX: 600,
      LOG_LEVEL: 'info',
    });
    expect(c.DATABASE_URL).toBeUndefined();
    expect(c.REDIS_URL).toBeUndefined();
  });

  it('parses numbers and URLs from strings and treats empty strings as unset', () => {
    const c = loadConfig({
      PORT: '8080',
      DATABASE_URL: 'postgres://u@db:5432/fulcrum',
      REDIS_URL: '',
      FULCRUM_RATE_LIMIT_MAX: '0',
    });
    expect(c.PORT).toBe(8080);
    expect(c.DATABASE_URL).toBe('postgres://u@db:5432/fulcrum');
    expect(c.REDIS_URL).toBeUndefined();
    expect(c.FULCRUM_RATE_LIMIT_MAX).toBe(0);
  });

  it('names every variable at fault', () => {
    let err: unknown;
    try {
      loadConfig({ PORT: 'eighty', LOG_LEVEL: 'loud', FULCRUM_BOOTSTRAP_KEY: 'letmein' });
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(ConfigError);
    const msg = (err as Error).message;
    expect(msg).toContain('PORT');
    expect(msg).toContain('LOG_LEVEL');
    expect(msg).toContain('FULCRUM_BOOTSTRAP_KEY');
    expect(msg).not.toContain('letmein');
  });
});
