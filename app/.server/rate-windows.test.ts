import { describe, expect, it } from "vitest";
import { countWindowHit, FixedWindows } from "./rate-windows";

// Fixed windows as the API's per-minute limit uses them. Across worker processes the same windows are kept by the
// cluster's primary; tests/integration/cluster.test.ts checks that path against a server of two workers.
describe("fixed rate windows", () => {
  it("counts the hits of one bucket inside its window and starts again once the window has run out", () => {
    const w = new FixedWindows();
    const t0 = 1_000_000;
    expect(w.hit("a", 60, t0)).toEqual({ count: 1, secondsLeft: 60 });
    expect(w.hit("a", 60, t0 + 59_001)).toEqual({ count: 2, secondsLeft: 1 });
    expect(w.hit("b", 60, t0 + 59_500)).toEqual({ count: 1, secondsLeft: 60 });
    expect(w.hit("a", 60, t0 + 60_000)).toEqual({ count: 1, secondsLeft: 60 });
    expect(w.hit("a", 60, t0 + 90_500)).toEqual({ count: 2, secondsLeft: 30 });
  });

  it("forgets run-out windows once it holds many buckets", () => {
    const w = new FixedWindows();
    for (let i = 0; i <= 10_001; i++) w.hit(`old-${i}`, 60, 0);
    w.hit("new", 60, 61_000);
    expect((w as unknown as { windows: Map<string, unknown> }).windows.size).toBe(1);
  });

  it("counts in this process when it is not a worker of the production server", async () => {
    const bucket = `local-${Math.random()}`;
    expect(await countWindowHit(bucket, 60)).toMatchObject({ count: 1 });
    expect(await countWindowHit(bucket, 60)).toMatchObject({ count: 2 });
  });
});
