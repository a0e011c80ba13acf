/**
 * Cell-level rules shared by inference and validation: what is missing, what is a number.
 */

/** Empty cells and `NA` are missing values (after trimming spaces and tabs). */
export function isMissing(s: string): boolean {
  return s.length === 0 || s === 'NA';
}

/** Trim spaces and tabs only when there are some (the common case allocates nothing). */
export function trimCell(s: string): string {
  const n = s.length;
  if (n === 0) return s;
  const a = s.charCodeAt(0);
  const b = s.charCodeAt(n - 1);
  return a === 32 || a === 9 || b === 32 || b === 9 ? s.trim() : s;
}

/** Result of reading a cell as a number: the value, or why it is not one. */
export const NOT_A_NUMBER = 1;
export const NOT_FINITE = 2;

const NON_FINITE_WORD = /^[+-]?(nan|inf|infinity)$/i;

const POW10 = [1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22];

/**
 * Plain decimals (`-12.375`, at most 15 significant digits, at most 22 decimals) read
 * without string-to-number conversion: the integer mantissa and 10^k are both exact doubles,
 * so one correctly rounded division gives the correctly rounded value (Clinger 1990, "How to
 * read floating point numbers accurately", the fast path). NaN when `s` is not that simple.
 */
function plainDecimal(s: string): number {
  const n = s.length;
  let i = 0;
  let c = s.charCodeAt(0);
  const neg = c === 45;
  if (neg || c === 43) i = 1;
  let m = 0;
  let significant = 0;
  let k = 0;
  let dot = false;
  let digits = false;
  for (; i < n; i++) {
    c = s.charCodeAt(i);
    if (c >= 48 && c <= 57) {
      m = m * 10 + (c - 48);
      digits = true;
      if (m !== 0) significant++;
      if (dot) k++;
    } else if (c === 46 && !dot) dot = true;
    else return NaN;
  }
  if (!digits || significant > 15 || k > 22) return NaN;
  const v = k === 0 ? m : m / POW10[k];
  return neg ? -v : v;
}

/**
 * Read a decimal number as PostgreSQL's float8 input accepts it. Returns the value, with
 * `status[0]` 0 when fine, else NOT_A_NUMBER or NOT_FINITE (and NaN).
 * JavaScript also reads hex/octal/binary literals (`0x1f`); PostgreSQL does not, so they are
 * rejected here.
 */
export function readNumber(s: string, status: Int32Array): number {
  const p = plainDecimal(s);
  if (p === p) {
    status[0] = 0;
    return p;
  }
  const v = +s;
  if (v !== v || v === Infinity || v === -Infinity) {
    status[0] = v !== v && !NON_FINITE_WORD.test(s) ? NOT_A_NUMBER : NOT_FINITE;
    return NaN;
  }
  if (s.charCodeAt(0) === 48 && s.length > 2) {
    const c1 = s.charCodeAt(1) | 32;
    if (c1 === 120 || c1 === 111 || c1 === 98) {
      status[0] = NOT_A_NUMBER;
      return NaN;
    }
  }
  status[0] = 0;
  return v;
}

/** Quote a label for COPY CSV when it holds a comma, quote or line break. */
export function csvQuote(label: string): string {
  return /[",\r\n]/.test(label) ? `"${label.replace(/"/g, '""')}"` : label;
}

/** Pairs read as binary when a text column holds exactly these two labels (case-insensitive), false-like first. */
export const BOOLEAN_PAIRS: readonly (readonly [string, string])[] = [
  ['0', '1'],
  ['false', 'true'],
  ['no', 'yes'],
  ['n', 'y'],
  ['f', 't'],
];

/** If `a` and `b` form a boolean-like pair, return them false-like first; otherwise null. */
export function booleanOrder(a: string, b: string): [string, string] | null {
  const la = a.toLowerCase();
  const lb = b.toLowerCase();
  for (const [f, t] of BOOLEAN_PAIRS) {
    if (la === f && lb === t) return [a, b];
    if (la === t && lb === f) return [b, a];
  }
  return null;
}

/** Order labels for codes: numerically when every label is a number, else by code unit. */
export function sortLevels(labels: string[]): string[] {
  const status = new Int32Array(1);
  const nums = labels.map((l) => readNumber(l, status));
  const numeric = labels.every((l) => {
    readNumber(l, status);
    return status[0] === 0;
  });
  if (numeric) {
    const idx = labels.map((_, i) => i).sort((i, j) => nums[i] - nums[j]);
    return idx.map((i) => labels[i]);
  }
  return [...labels].sort((x, y) => (x < y ? -1 : x > y ? 1 : 0));
}

/** Reason given (ERR_DATA_MALFORMED_CSV) for a NUL character, which PostgreSQL text cannot hold. */
export const NUL_REASON = (column: string) => `column "${column}" holds a NUL character (code 0), which cannot be stored`;
