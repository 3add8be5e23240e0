import { describe, expect, it } from "vitest";
import { defaultRevisionPair, pairIsShown, pickRevisionPair } from "./revision-pair";

// A history newest first: a proposal under review on top, then the current value, then two superseded ones.
const history = [
  { id: 41, seq: 4, state: "proposed" },
  { id: 30, seq: 3, state: "current" },
  { id: 22, seq: 2, state: "superseded" },
  { id: 10, seq: 1, state: "superseded" },
];

describe("the two revisions shown side by side", () => {
  it("opens with the current revision and the one before it", () => {
    expect(defaultRevisionPair(history)).toEqual({ from: 22, to: 30 });
    expect(defaultRevisionPair(history.slice(1))).toEqual({ from: 22, to: 30 });
    expect(defaultRevisionPair([{ id: 5, seq: 2, state: "retired" }, { id: 4, seq: 1, state: "superseded" }])).toEqual({ from: 4, to: 5 });
    expect(defaultRevisionPair([{ id: 30, seq: 1, state: "current" }])).toEqual({ from: null, to: 30 });
  });

  it("takes two known revisions by id, as links carry them", () => {
    const pair = pickRevisionPair(history, { from: "10", to: "30" });
    expect(pair).toEqual({ from: 10, to: 30, errors: {} });
    expect(pairIsShown(pair)).toBe(true);
  });

  it("puts a message at the second field when one revision is picked twice", () => {
    const pair = pickRevisionPair(history, { from: "22", to: "22" });
    expect(pair.errors.from).toBeUndefined();
    expect(pair.errors.to).toMatch(/Revision 2 is already the first pick/);
    expect(pairIsShown(pair)).toBe(false);
  });

  it("puts a message at the field of an unknown, malformed or missing revision and keeps the other pick", () => {
    const unknown = pickRevisionPair(history, { from: "999", to: "30" });
    expect(unknown).toMatchObject({ from: null, to: 30 });
    expect(unknown.errors.from).toMatch(/revision id 999, which is not in this record's history/);
    const malformed = pickRevisionPair(history, { from: "10", to: "-3" });
    expect(malformed.errors.to).toMatch(/“-3” is not a revision of this record/);
    expect(pickRevisionPair(history, { from: "1e3", to: "10" }).errors.from).toMatch(/is not a revision/);
    expect(pickRevisionPair(history, { from: "99999999999999999999", to: "10" }).errors.from).toMatch(/is not a revision/);
    expect(pickRevisionPair(history, { to: "10" }).errors.from).toBe("Pick a revision from the list.");
  });
});
