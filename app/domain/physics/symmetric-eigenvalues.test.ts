import fc from "fast-check";
import { eigs } from "mathjs";
import { EigenvalueDecomposition, Matrix } from "ml-matrix";
import { describe, expect, it } from "vitest";
import { planeWaveHamiltonian } from "./nfe";
import { symmetricEigenvalues } from "./symmetric-eigenvalues";

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
