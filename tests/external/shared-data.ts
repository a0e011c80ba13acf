/**
 * Where the published datasets are: `shared/data` beside the checkout (as CI lays it out),
 * else the workplace's /work/shared/data.
 */
import { existsSync } from 'node:fs';
import { join, resolve } from 'node:path';

export function sharedDataFile(...parts: string[]): string {
  const beside = resolve(process.cwd(), '..', 'shared', 'data', ...parts);
  return existsSync(beside) ? beside : join('/work/shared/data', ...parts);
}
