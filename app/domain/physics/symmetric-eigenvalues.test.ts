import fc from "fast-check";
import { complex, eigs } from "mathjs";
import { EigenvalueDecomposition, Matrix } from "ml-matrix";
import { describe, expect, it } from "vitest";
import { formFactorsFromRydberg, planeWaveBasis, pseudopotentialHamiltonian } from "./epm";
import { planeWaveHamiltonian } from "./nfe";
import { hermitianEigenvalues, symmetricEigenvalues } from "./symmetric-eigenvalues";

const ours = (rows: number[][]) => Array.from(symmetricEigenvalues(Float64Array.from(rows.flat()), rows.length));
const mathjs = (rows: number[][]) => (eigs(rows).values as number[]).slice().sort((a, b) => a - b);
const mlMatrix = (rows: number[][]) =>
  new EigenvalueDecomposition(new Matrix(rows), { assumeSymmetric: true }).realEigenvalues.sort((a, b) => a - b);

function expectSame(actual: number[], expected: number[], scale: number) {
  expect(actual).toHaveLength(expected.length);
  actual.forEach((value, i) => expect(Math.abs(value - expected[i])).toBeLessThanOrEqual(1e-11 * scale));
}

const norm = (rows: number[][]) => Math.max(1, ...rows.map((row) => row.reduce((s, v) => s + Math.abs(v), 0)));

describe("symmetric eigenvalues", () => {
  it("agree with mathjs eigs and ml-matrix on central-equation Hamiltonians", () => {
    fc.assert(
      fc.property(
        fc.double({ min: 5, max: 6.5, noNaN: true }),
        // On a grid of 1 µeV: ml-matrix 6.15's tql2 reads past its arrays on subnormal entries.
        fc.array(fc.integer({ min: -1e6, max: 1e6 }).map((micro) => micro / 1e6), { minLength: 1, maxLength: 3 }),
        fc.double({ min: -1, max: 1, noNaN: true }),
        fc.integer({ min: 0, max: 12 }),
        (a, us, k, halfWidth) => {
          const h = planeWaveHamiltonian({ periodAngstrom: a, coefficients: us.map((energyEv, i) => ({ n: i + 1, energyEv })) }, k, halfWidth);
          expectSame(ours(h), mathjs(h), norm(h));
          expectSame(ours(h), mlMatrix(h), norm(h));
        },
      ),
      { numRuns: 40 },
    );
  });

  it("agree with mathjs eigs on dense random symmetric matrices", () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 14 }).chain((n) =>
          fc.array(fc.double({ min: -10, max: 10, noNaN: true }), { minLength: n * n, maxLength: n * n }).map((v) => ({ n, v })),
        ),
        ({ n, v }) => {
          const rows = Array.from({ length: n }, (_, i) => Array.from({ length: n }, (_, j) => (i >= j ? v[i * n + j] : v[j * n + i])));
          expectSame(ours(rows), mathjs(rows), norm(rows));
        },
      ),
      { numRuns: 60 },
    );
  });

  it("handle degenerate, diagonal and 1×1 matrices", () => {
    expect(ours([[3]])).toEqual([3]);
    expect(ours([[2, 0, 0], [0, -1, 0], [0, 0, 5]])).toEqual([-1, 2, 5]);
    expect(ours([[1, 0], [0, 1]])).toEqual([1, 1]);
    expect(ours([[0, 0], [0, 0]])).toEqual([0, 0]);
    expectSame(ours([[2, 1], [1, 2]]), [1, 3], 3);
  });
});

// A Hermitian H = A + iB, row-major parts.
interface Hermitian {
  n: number;
  re: Float64Array;
  im: Float64Array;
}

const oursHermitian = ({ n, re, im }: Hermitian) => Array.from(hermitianEigenvalues(re.slice(), im.slice(), n));
// mathjs eigs on the complex matrix itself.
const mathjsHermitian = ({ n, re, im }: Hermitian) => {
  const rows = Array.from({ length: n }, (_, i) => Array.from({ length: n }, (_, j) => complex(re[i * n + j], im[i * n + j])));
  return (eigs(rows).values as unknown as (number | { re: number })[]).map((v) => (typeof v === "number" ? v : v.re)).sort((a, b) => a - b);
};
// ml-matrix on the real symmetric embedding [[A, −B], [B, A]]: every eigenvalue of H appears twice.
const mlMatrixEmbedding = ({ n, re, im }: Hermitian) => {
  const big = Matrix.zeros(2 * n, 2 * n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      big.set(i, j, re[i * n + j]);
      big.set(i + n, j + n, re[i * n + j]);
      big.set(i + n, j, im[i * n + j]);
      big.set(i, j + n, -im[i * n + j]);
    }
  }
  const values = new EigenvalueDecomposition(big, { assumeSymmetric: true }).realEigenvalues.sort((a, b) => a - b);
  return values.filter((_, i) => i % 2 === 0);
};
const hermitianNorm = ({ n, re, im }: Hermitian) => {
  let worst = 1;
  for (let i = 0; i < n; i++) {
    let sum = 0;
    for (let j = 0; j < n; j++) sum += Math.hypot(re[i * n + j], im[i * n + j]);
    worst = Math.max(worst, sum);
  }
  return worst;
};

describe("Hermitian eigenvalues", () => {
  const hermitianOf = (entry: fc.Arbitrary<number>) => fc.integer({ min: 1, max: 14 }).chain((n) =>
    fc
      .array(entry, { minLength: 2 * n * n, maxLength: 2 * n * n })
      .map((v): Hermitian => {
        const re = new Float64Array(n * n);
        const im = new Float64Array(n * n);
        for (let i = 0; i < n; i++) {
          for (let j = 0; j <= i; j++) {
            re[i * n + j] = re[j * n + i] = v[i * n + j];
            const b = i === j ? 0 : v[n * n + i * n + j];
            im[i * n + j] = b;
            im[j * n + i] = -b;
          }
        }
        return { n, re, im };
      }),
  );
  // On a grid of 1e-6: ml-matrix 6.15's tql2 reads past its arrays on subnormal entries.
  const gridHermitian = hermitianOf(fc.integer({ min: -1e7, max: 1e7 }).map((micro) => micro / 1e6));

  // mathjs treats a complex matrix as a general one; where two eigenvalues lie close (3e-6 apart in a 9×9 case) it
  // was 4e-9 off while LAPACK (numpy eigvalsh) agreed with ours to the last digit, hence 1e-8 here.
  it("agree with mathjs eigs on dense random Hermitian matrices", () => {
    fc.assert(
      fc.property(gridHermitian, (h) => {
        const expected = mathjsHermitian(h);
        const actual = oursHermitian(h);
        actual.forEach((value, i) => expect(Math.abs(value - expected[i])).toBeLessThanOrEqual(1e-8 * hermitianNorm(h)));
      }),
      { numRuns: 30 },
    );
  }, 60_000);

  it("agree with ml-matrix on the real 2n×2n embedding of dense random Hermitian matrices", () => {
    fc.assert(
      fc.property(gridHermitian, (h) => expectSame(oursHermitian(h), mlMatrixEmbedding(h), hermitianNorm(h))),
      { numRuns: 60 },
    );
  }, 30_000);

  it("keep the reflection unitary when the element that sets its phase is subnormal (found by fast-check)", () => {
    // H couples 11–5 by −7.2i and 10–8 by −8.47213595499958e-11 i; the 11–10 element is 2.5e-323 + 2e-323 i.
    // Without that last element the eigenvalues are ±7.2, ±8.47213595499958e-11 and eight zeros (calc); it moves
    // them by no more than its own size, far below these tolerances.
    const n = 12;
    const re = new Float64Array(n * n);
    const im = new Float64Array(n * n);
    const set = (i: number, j: number, r: number, m: number) => {
      re[i * n + j] = r;
      im[i * n + j] = m;
      re[j * n + i] = r;
      im[j * n + i] = -m;
    };
    set(11, 5, 0, -7.2);
    set(10, 8, 0, -8.47213595499958e-11);
    set(11, 10, 2.5e-323, 2e-323);
    const values = oursHermitian({ n, re, im });
    const expected = [-7.2, -8.47213595499958e-11, ...Array(8).fill(0), 8.47213595499958e-11, 7.2];
    values.forEach((value, i) => expect(Math.abs(value - expected[i])).toBeLessThanOrEqual(1e-15 * 7.2));
  });

  it("agree with ml-matrix on zinc-blende pseudopotential Hamiltonians at random k", () => {
    const basis = planeWaveBasis(
      { structure: "zincblende", latticeAngstrom: 5.64, formFactorsEv: formFactorsFromRydberg({ S3: -0.23, S8: 0.01, S11: 0.06, A3: 0.07, A4: 0.05, A11: 0.01 }) },
      11,
    );
    fc.assert(
      fc.property(fc.tuple(fc.double({ min: -1, max: 1, noNaN: true }), fc.double({ min: -1, max: 1, noNaN: true }), fc.double({ min: -1, max: 1, noNaN: true })), (k) => {
        const { re, im, size } = pseudopotentialHamiltonian(basis, k);
        const h = { n: size, re, im };
        expectSame(oursHermitian(h), mlMatrixEmbedding(h), hermitianNorm(h));
      }),
      { numRuns: 10 },
    );
  }, 30_000);

  it("reduce to the real solver when the imaginary part is zero, and handle 1×1, diagonal and purely imaginary matrices", () => {
    const real = Float64Array.from([4, 1, -2, 1, 3, 0.5, -2, 0.5, 1]);
    expectSame(Array.from(hermitianEigenvalues(real.slice(), new Float64Array(9), 3)), ours([[4, 1, -2], [1, 3, 0.5], [-2, 0.5, 1]]), 7);
    expect(Array.from(hermitianEigenvalues(Float64Array.from([3]), Float64Array.from([0]), 1))).toEqual([3]);
    expect(Array.from(hermitianEigenvalues(Float64Array.from([2, 0, 0, -1]), new Float64Array(4), 2))).toEqual([-1, 2]);
    // [[0, −i], [i, 0]] (σ_y) has eigenvalues ±1.
    expectSame(Array.from(hermitianEigenvalues(new Float64Array(4), Float64Array.from([0, -1, 1, 0]), 2)), [-1, 1], 1);
    expect(() => hermitianEigenvalues(new Float64Array(3), new Float64Array(4), 2)).toThrow(RangeError);
  });
});
