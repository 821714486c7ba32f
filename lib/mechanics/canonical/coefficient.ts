/**
 * Numeric coefficients of canonical terms: exact rationals over safe integers,
 * falling back to a float only when a numerator or denominator would leave the
 * safe-integer range. Exactness is what lets sin²+cos² and the like cancel to
 * nothing instead of to 1e-17.
 */

/** `d > 0`: the rational n/d in lowest terms. `d === 0`: a float whose value is `n`. */
export interface Coefficient {
  readonly n: number;
  readonly d: number;
}

export const ZERO: Coefficient = { n: 0, d: 1 };
export const ONE: Coefficient = { n: 1, d: 1 };
export const MINUS_ONE: Coefficient = { n: -1, d: 1 };
export const HALF: Coefficient = { n: 1, d: 2 };

function gcd(a: number, b: number): number {
  a = Math.abs(a);
  b = Math.abs(b);
  while (b !== 0) {
    const r = a % b;
    a = b;
    b = r;
  }
  return a;
}

function float(value: number): Coefficient {
  return { n: value, d: 0 };
}

/** The rational n/d in lowest terms (a float if it cannot be held exactly). */
export function rational(n: number, d = 1): Coefficient {
  if (d === 0) throw new RangeError("division by zero");
  if (!Number.isSafeInteger(n) || !Number.isSafeInteger(d)) return float(n / d);
  if (n === 0) return ZERO;
  if (d < 0) {
    n = -n;
    d = -d;
  }
  const g = gcd(n, d);
  return g === 1 ? { n, d } : { n: n / g, d: d / g };
}

/** Reads a literal exactly where it is a short decimal (9.81 → 981/100). */
export function fromNumber(value: number): Coefficient {
  if (!Number.isFinite(value)) throw new RangeError("coefficient is not finite");
  if (Number.isSafeInteger(value)) return rational(value, 1);
  let scale = 1;
  for (let digits = 0; digits < 15; digits++) {
    const scaled = value * scale;
    if (Number.isSafeInteger(scaled) && scaled / scale === value) return rational(scaled, scale);
    scale *= 10;
  }
  return float(value);
}

export function isZero(a: Coefficient): boolean {
  return a.n === 0;
}

export function isOne(a: Coefficient): boolean {
  return a.n === 1 && a.d === 1;
}

export function isExact(a: Coefficient): boolean {
  return a.d !== 0;
}

export function toNumber(a: Coefficient): number {
  return a.d === 0 ? a.n : a.n / a.d;
}

export function add(a: Coefficient, b: Coefficient): Coefficient {
  if (a.d === 0 || b.d === 0) return float(toNumber(a) + toNumber(b));
  if (a.d === b.d) return rational(a.n + b.n, a.d);
  const g = gcd(a.d, b.d);
  const n = a.n * (b.d / g) + b.n * (a.d / g);
  const d = (a.d / g) * b.d;
  return Number.isSafeInteger(n) && Number.isSafeInteger(d) ? rational(n, d) : float(toNumber(a) + toNumber(b));
}

export function multiply(a: Coefficient, b: Coefficient): Coefficient {
  if (a.d === 0 || b.d === 0) return float(toNumber(a) * toNumber(b));
  if (a.d === 1 && b.d === 1) {
    const n = a.n * b.n;
    return Number.isSafeInteger(n) ? { n, d: 1 } : float(n);
  }
  // Cross-cancel first so intermediate products stay small.
  const g1 = gcd(a.n, b.d);
  const g2 = gcd(b.n, a.d);
  const n = (a.n / g1) * (b.n / g2);
  const d = (a.d / g2) * (b.d / g1);
  return Number.isSafeInteger(n) && Number.isSafeInteger(d) ? rational(n, d) : float(toNumber(a) * toNumber(b));
}

export function negate(a: Coefficient): Coefficient {
  return a.n === 0 ? a : { n: -a.n, d: a.d };
}

export function inverse(a: Coefficient): Coefficient {
  if (a.n === 0) throw new RangeError("division by zero");
  return a.d === 0 ? float(1 / a.n) : rational(a.d, a.n);
}

/** a^k for an integer k. */
export function power(a: Coefficient, k: number): Coefficient {
  if (k < 0) return power(inverse(a), -k);
  let result = ONE;
  let base = a;
  while (k > 0) {
    if (k & 1) result = multiply(result, base);
    base = multiply(base, base);
    k >>= 1;
  }
  return result;
}

/** a^(p/q) when it is rational (e.g. (9/4)^(1/2) = 3/2), otherwise null. */
export function rationalRoot(a: Coefficient, exponent: number): Coefficient | null {
  if (a.d === 0 || a.n < 0) return null;
  const n = Math.round(Math.pow(a.n, exponent));
  const d = Math.round(Math.pow(a.d, exponent));
  if (d === 0) return null;
  const candidate = rational(n, d);
  return Math.abs(Math.pow(toNumber(a), exponent) - toNumber(candidate)) <= 1e-12 * Math.abs(toNumber(candidate)) &&
    Number.isInteger(1 / exponent) &&
    power(candidate, Math.round(1 / exponent)).n === a.n &&
    power(candidate, Math.round(1 / exponent)).d === a.d
    ? candidate
    : null;
}

export function key(a: Coefficient): string {
  return a.d === 0 ? `f${a.n}` : `${a.n}/${a.d}`;
}

/** An exponent or angle coefficient (a float that is usually a small fraction like 1/3) as a coefficient. */
export function fromFraction(value: number): Coefficient {
  if (Number.isInteger(value)) return rational(value, 1);
  for (let q = 2; q <= 1000; q++) {
    const p = Math.round(value * q);
    if (Math.abs(p / q - value) < 1e-12) return rational(p, q);
  }
  return fromNumber(value);
}
