import { describe, expect, it } from 'vitest';
import { parseEnvConfig } from '../../src/config/env-config.js';

describe('parseEnvConfig: DATABASE_URL', () => {
  it('keeps the embedded SQLite store when DATABASE_URL is unset or empty', () => {
    for (const env of [{}, { DATABASE_URL: '' }, { DATABASE_URL: '  ' }]) {
      const result = parseEnvConfig(env, '/srv/oxygen-order-checker');
      expect(result.kind === 'ok' && result.config.store).not.toHaveProperty('databaseUrl');
    }
  });

  it.each(['postgres://larkspur@db.larkspur-bay.example/cds', 'postgresql://larkspur:pw@10.0.0.5:5432/cds?sslmode=require'])(
    'takes the PostgreSQL store at %s',
    (url) => {
      const result = parseEnvConfig({ DATABASE_URL: url }, '/srv/oxygen-order-checker');
      expect(result.kind === 'ok' && result.config.store.databaseUrl).toBe(url);
    },
  );

  it.each(['mysql://larkspur:s3cret@db/cds', 'db.larkspur-bay.example', 'postgres://'])(
    'refuses %s without repeating it (it may carry a password)',
    (url) => {
      const result = parseEnvConfig({ DATABASE_URL: url }, '/srv/oxygen-order-checker');
      expect(result.kind).toBe('invalid');
      if (result.kind === 'invalid') {
        expect(result.problems).toStrictEqual([
          {
            variable: 'DATABASE_URL',
            message: 'must be a postgres:// or postgresql:// URL (or empty for the embedded SQLite store)',
          },
        ]);
      }
    },
  );
});
