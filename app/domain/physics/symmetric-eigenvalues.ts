// Eigenvalues only of a real symmetric matrix: Householder reduction to tridiagonal form, then the implicit
// QL algorithm (the tred2/tqli pair of Press et al., Numerical Recipes, 3rd ed., §11.3–11.4, without the
// eigenvector work). It replaces ml-matrix's EigenvalueDecomposition on the hot path of the NFE check, which
// always accumulates eigenvectors and was 3–4× slower on the check's matrices, about 6× at 201 plane waves
// (docs/decisions/006-own-eigenvalue-solver.md).

const MAX_QL_SWEEPS = 60;

/**
 * Eigenvalues in ascending order of the symmetric n×n matrix stored row-major in `matrix` (only the lower
 * triangle is read). `matrix` is overwritten.
 */
export function symmetricEigenvalues(matrix: Float64Array, n: number): Float64Array {
  if (matrix.length < n * n) throw new RangeError(`matrix holds ${matrix.length} entries, fewer than ${n}×${n}`);
  const d = new Float64Array(n);
  const e = new Float64Array(n);
  tridiagonalize(matrix, n, d, e);
  tridiagonalQl(d, e, n);
  return d.sort();
}

// Householder reduction: on return d holds the diagonal and e[1..n−1] the subdiagonal (e[0] = 0).
function tridiagonalize(a: Float64Array, n: number, d: Float64Array, e: Float64Array): void {
  for (let i = n - 1; i > 0; i--) {
    const l = i - 1;
    const row = i * n;
    let h = 0;
    if (l > 0) {
      let scale = 0;
      for (let k = 0; k <= l; k++) scale += Math.abs(a[row + k]);
      if (scale === 0) {
        e[i] = a[row + l];
      } else {
        for (let k = 0; k <= l; k++) {
          a[row + k] /= scale;
          h += a[row + k] * a[row + k];
        }
        let f = a[row + l];
        let g = f >= 0 ? -Math.sqrt(h) : Math.sqrt(h);
        e[i] = scale * g;
        h -= f * g;
        a[row + l] = f - g;
        f = 0;
        for (let j = 0; j <= l; j++) {
          g = 0;
          for (let k = 0; k <= j; k++) g += a[j * n + k] * a[row + k];
          for (let k = j + 1; k <= l; k++) g += a[k * n + j] * a[row + k];
          e[j] = g / h;
          f += e[j] * a[row + j];
        }
        const hh = f / (h + h);
        for (let j = 0; j <= l; j++) {
          f = a[row + j];
          g = e[j] - hh * f;
          e[j] = g;
          for (let k = 0; k <= j; k++) a[j * n + k] -= f * e[k] + g * a[row + k];
        }
      }
    } else {
      e[i] = a[row + l];
    }
  }
  e[0] = 0;
  for (let i = 0; i < n; i++) d[i] = a[i * n + i];
}

// Implicit QL with Wilkinson shifts on the tridiagonal (d, e); d is overwritten by the eigenvalues.
function tridiagonalQl(d: Float64Array, e: Float64Array, n: number): void {
  for (let i = 1; i < n; i++) e[i - 1] = e[i];
  if (n > 0) e[n - 1] = 0;
  for (let l = 0; l < n; l++) {
    let sweeps = 0;
    for (;;) {
      let m = l;
      for (; m < n - 1; m++) {
        const dd = Math.abs(d[m]) + Math.abs(d[m + 1]);
        if (Math.abs(e[m]) <= Number.EPSILON * dd) break;
      }
      if (m === l) break;
      if (++sweeps > MAX_QL_SWEEPS) throw new Error("symmetric eigenvalues: QL iteration did not converge");
      let g = (d[l + 1] - d[l]) / (2 * e[l]);
      let r = pythag(g, 1);
      g = d[m] - d[l] + e[l] / (g + (g >= 0 ? r : -r));
      let s = 1;
      let c = 1;
      let p = 0;
      let i = m - 1;
      for (; i >= l; i--) {
        const f = s * e[i];
        const b = c * e[i];
        r = pythag(f, g);
        e[i + 1] = r;
        if (r === 0) {
          d[i + 1] -= p;
          e[m] = 0;
          break;
        }
        s = f / r;
        c = g / r;
        g = d[i + 1] - p;
        r = (d[i] - g) * s + 2 * c * b;
        p = s * r;
        d[i + 1] = g + p;
        g = c * r - b;
      }
      if (r === 0 && i >= l) continue;
      d[l] -= p;
      e[l] = g;
      e[m] = 0;
    }
  }
}

// √(a² + b²) without underflow or overflow; Math.hypot does the same but is several times slower in V8.
function pythag(a: number, b: number): number {
  const absA = Math.abs(a);
  const absB = Math.abs(b);
  if (absA > absB) {
    const ratio = absB / absA;
    return absA * Math.sqrt(1 + ratio * ratio);
  }
  if (absB === 0) return 0;
  const ratio = absA / absB;
  return absB * Math.sqrt(1 + ratio * ratio);
}
