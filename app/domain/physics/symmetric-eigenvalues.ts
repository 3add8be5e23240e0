// Eigenvalues only of a real symmetric matrix: Householder reduction to tridiagonal form, then the implicit
// QL algorithm (the tred2/tqli pair of Press et al., Numerical Recipes, 3rd ed., §11.3–11.4, without the
// eigenvector work). It replaces ml-matrix's EigenvalueDecomposition on the hot path of the NFE check, which
// always accumulates eigenvectors and was 3–4× slower on the check's matrices, about 6× at 201 plane waves
// (docs/decisions/006-own-eigenvalue-solver.md).
// Complex Hermitian matrices (the pseudopotential check of zinc blende) take a complex Householder reduction
// to a real tridiagonal matrix (the htridi scheme of EISPACK; Golub & Van Loan, Matrix Computations, §8.3)
// and then the same QL step.

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

/**
 * Eigenvalues in ascending order of the Hermitian n×n matrix H = re + i·im stored row-major (only the lower
 * triangle is read; the diagonal of `im` is ignored). Both arrays are overwritten.
 */
export function hermitianEigenvalues(re: Float64Array, im: Float64Array, n: number): Float64Array {
  if (re.length < n * n || im.length < n * n) {
    throw new RangeError(`matrix holds ${Math.min(re.length, im.length)} entries, fewer than ${n}×${n}`);
  }
  const d = new Float64Array(n);
  const e = new Float64Array(n);
  tridiagonalizeHermitian(re, im, n, d, e);
  tridiagonalQl(d, e, n);
  return d.sort();
}

// Complex Householder reduction. Step i (from the last row up) takes the column v = conj(row i, columns 0..i−1)
// to a multiple of e_{i−1} with P = I − w wᴴ/h, w = v + e^{iθ}‖v‖ e_{i−1}, θ = arg v_{i−1}, h = ‖v‖² + ‖v‖·|v_{i−1}|,
// and updates the leading block B ← P B P = B − w qᴴ − q wᴴ, p = B w / h, q = p − (wᴴp / 2h) w. The off-diagonal
// element left behind is −e^{iθ}‖v‖; a diagonal unitary similarity makes it real without changing the
// eigenvalues, so e[i] keeps its modulus ‖v‖. On return d holds the diagonal and e[1..n−1] the subdiagonal.
function tridiagonalizeHermitian(ar: Float64Array, ai: Float64Array, n: number, d: Float64Array, e: Float64Array): void {
  const wr = new Float64Array(n);
  const wi = new Float64Array(n);
  const pr = new Float64Array(n);
  const pi = new Float64Array(n);
  for (let i = n - 1; i > 0; i--) {
    const l = i - 1;
    const row = i * n;
    let scale = 0;
    for (let k = 0; k <= l; k++) scale += Math.abs(ar[row + k]) + Math.abs(ai[row + k]);
    if (scale === 0) {
      e[i] = 0;
      continue;
    }
    let sigma = 0;
    for (let k = 0; k <= l; k++) {
      // w starts as v = conj(row i) / scale
      wr[k] = ar[row + k] / scale;
      wi[k] = -ai[row + k] / scale;
      sigma += wr[k] * wr[k] + wi[k] * wi[k];
    }
    const g = Math.sqrt(sigma);
    e[i] = scale * g;
    if (l === 0) continue;
    // The phase e^{iθ} of v_{i−1} from its parts divided by the larger one first: a tiny or subnormal element
    // squared underflows, and its modulus rounded on the subnormal grid would leave |e^{iθ}| ≠ 1.
    const big = Math.max(Math.abs(wr[l]), Math.abs(wi[l]));
    let phaseR = 1;
    let phaseI = 0;
    let modulus = 0;
    if (big > 0) {
      const a = wr[l] / big;
      const b = wi[l] / big;
      const r = Math.sqrt(a * a + b * b);
      phaseR = a / r;
      phaseI = b / r;
      modulus = big * r;
    }
    wr[l] += phaseR * g;
    wi[l] += phaseI * g;
    const h = sigma + g * modulus;
    // p = B w, B Hermitian from its lower triangle, reading each row once.
    for (let j = 0; j <= l; j++) {
      pr[j] = 0;
      pi[j] = 0;
    }
    for (let j = 0; j <= l; j++) {
      const rj = j * n;
      let sr = ar[rj + j] * wr[j];
      let si = ar[rj + j] * wi[j];
      const wjr = wr[j];
      const wji = wi[j];
      for (let k = 0; k < j; k++) {
        const br = ar[rj + k];
        const bi = ai[rj + k];
        // B[j][k] w_k
        sr += br * wr[k] - bi * wi[k];
        si += br * wi[k] + bi * wr[k];
        // B[k][j] w_j = conj(B[j][k]) w_j
        pr[k] += br * wjr + bi * wji;
        pi[k] += br * wji - bi * wjr;
      }
      pr[j] += sr;
      pi[j] += si;
    }
    // p /= h; K = (wᴴ p) / 2h, real because B is Hermitian; q = p − K w (kept in p).
    let wp = 0;
    for (let j = 0; j <= l; j++) {
      pr[j] /= h;
      pi[j] /= h;
      wp += wr[j] * pr[j] + wi[j] * pi[j];
    }
    const kk = wp / (2 * h);
    for (let j = 0; j <= l; j++) {
      pr[j] -= kk * wr[j];
      pi[j] -= kk * wi[j];
    }
    // B[j][k] −= w_j conj(q_k) + q_j conj(w_k), lower triangle only.
    for (let j = 0; j <= l; j++) {
      const rj = j * n;
      const wjr = wr[j];
      const wji = wi[j];
      const qjr = pr[j];
      const qji = pi[j];
      for (let k = 0; k <= j; k++) {
        ar[rj + k] -= wjr * pr[k] + wji * pi[k] + qjr * wr[k] + qji * wi[k];
        ai[rj + k] -= wji * pr[k] - wjr * pi[k] + qji * wr[k] - qjr * wi[k];
      }
    }
  }
  e[0] = 0;
  for (let i = 0; i < n; i++) d[i] = ar[i * n + i];
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
        // p = A u from the lower triangle, reading each row once (row-major, so the inner loop runs along memory).
        for (let j = 0; j <= l; j++) e[j] = 0;
        for (let j = 0; j <= l; j++) {
          const rj = j * n;
          const uj = a[row + j];
          let s = a[rj + j] * uj;
          for (let k = 0; k < j; k++) {
            const ajk = a[rj + k];
            s += ajk * a[row + k];
            e[k] += ajk * uj;
          }
          e[j] += s;
        }
        f = 0;
        for (let j = 0; j <= l; j++) {
          e[j] /= h;
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
