/**
 * Dense LU factorisation with partial pivoting on a row-major Float64Array,
 * allocation-free so that integrators can call it at every step.
 */

/**
 * Factors the n×n matrix `a` in place (L below the diagonal with unit
 * diagonal, U on and above) and records row swaps in `pivot`.
 * Returns false when a pivot is zero or not finite (singular matrix).
 */
export function luFactor(n: number, a: Float64Array, pivot: Int32Array): boolean {
  let scale = 0;
  for (let i = 0; i < n * n; i++) scale = Math.max(scale, Math.abs(a[i]!));
  const tiny = scale * n * 1e-14;
  for (let k = 0; k < n; k++) {
    let p = k;
    let best = Math.abs(a[k * n + k]!);
    for (let i = k + 1; i < n; i++) {
      const v = Math.abs(a[i * n + k]!);
      if (v > best) {
        best = v;
        p = i;
      }
    }
    if (!(best > tiny) || !Number.isFinite(best)) return false;
    pivot[k] = p;
    if (p !== k) {
      for (let j = 0; j < n; j++) {
        const tmp = a[k * n + j]!;
        a[k * n + j] = a[p * n + j]!;
        a[p * n + j] = tmp;
      }
    }
    const inv = 1 / a[k * n + k]!;
    for (let i = k + 1; i < n; i++) {
      const factor = (a[i * n + k]! *= inv);
      if (factor !== 0) for (let j = k + 1; j < n; j++) a[i * n + j]! -= factor * a[k * n + j]!;
    }
  }
  return true;
}

/** Solves A x = b in place in `b`, given the factors from luFactor. */
export function luSolve(n: number, lu: Float64Array, pivot: Int32Array, b: Float64Array): void {
  for (let k = 0; k < n; k++) {
    const p = pivot[k]!;
    if (p !== k) {
      const tmp = b[k]!;
      b[k] = b[p]!;
      b[p] = tmp;
    }
  }
  for (let i = 1; i < n; i++) {
    let s = b[i]!;
    for (let j = 0; j < i; j++) s -= lu[i * n + j]! * b[j]!;
    b[i] = s;
  }
  for (let i = n - 1; i >= 0; i--) {
    let s = b[i]!;
    for (let j = i + 1; j < n; j++) s -= lu[i * n + j]! * b[j]!;
    b[i] = s / lu[i * n + i]!;
  }
}
