import { describe, expect, it } from 'vitest';
import { NOT_A_NUMBER, NOT_FINITE, readNumber } from '../../src/app/datasets/cell-values.js';
import { Rng } from '../../src/core/random/rng.js';

const status = new Int32Array(1);
const read = (s: string) => {
  const v = readNumber(s, status);
  return { v, status: status[0] };
};

describe('readNumber', () => {
  it('reads random decimals exactly as JavaScript Number() does (bit for bit)', () => {
    const rng = Rng.create(11);
    for (let i = 0; i < 20_000; i++) {
      const digits = 1 + rng.int(18);
      let s = rng.uniform() < 0.3 ? '-' : rng.uniform() < 0.1 ? '+' : '';
      const dotAt = rng.int(digits + 1);
      for (let d = 0; d < digits; d++) {
        if (d === dotAt) s += '.';
        s += String(rng.int(10));
      }
      if (rng.uniform() < 0.1) s += `e${rng.int(40) - 20}`;
      const r = read(s);
      expect(r.status).toBe(0);
      expect(Object.is(r.v, Number(s))).toBe(true);
    }
  });

  it('agrees with Number() on edge cases and refuses what PostgreSQL would not read', () => {
    for (const s of ['0', '-0', '5.', '.5', '+.5', '0.0000000000000000000001', '0.00000000000000000000001', '123456789012345678', '1e-400', '9007199254740993']) {
      expect(Object.is(read(s).v, Number(s))).toBe(true);
    }
    for (const s of ['.', '-', '1.2.3', '1,5', '0x1F', '0b101', '0o17', 'abc', '1e', '--1']) expect(read(s).status).toBe(NOT_A_NUMBER);
    for (const s of ['NaN', 'nan', 'Infinity', '-inf', '1e999']) expect(read(s).status).toBe(NOT_FINITE);
  });
});
