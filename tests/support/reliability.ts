// How hard the reliability suite pushes: "bounded" inside `npm test`, "full" for `npm run test:reliability`.
export const FULL = process.env.BANDLEDGER_RELIABILITY === "full";

// Pick the bounded or the full figure for a loop count, a duration or a size.
export function rounds(bounded: number, full: number): number {
  return FULL ? full : bounded;
}
