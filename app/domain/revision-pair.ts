// Which two revisions of one record to show side by side, read from the address (?from=<id>&to=<id>, revision ids
// as links have always carried them). A hand-edited address gets a message at the field, never an error page.

export type RevisionRef = { id: number; seq: number; state: string };

export type RevisionPair = {
  /** The revision shown on the left and the one beside it: ids that exist in this history, or null. */
  from: number | null;
  to: number | null;
  errors: { from?: string; to?: string };
};

/** The pair a history opens with: the current revision (else the newest) and the one just before it. */
export function defaultRevisionPair(revisionsNewestFirst: RevisionRef[]): { from: number | null; to: number | null } {
  const toIndex = Math.max(0, revisionsNewestFirst.findIndex((r) => r.state === "current"));
  const to = revisionsNewestFirst[toIndex] ?? null;
  const from = revisionsNewestFirst[toIndex + 1] ?? revisionsNewestFirst.find((r) => r !== to) ?? null;
  return { from: from?.id ?? null, to: to?.id ?? null };
}

function pickOne(revisions: RevisionRef[], raw: string | null | undefined): { id: number | null; error?: string } {
  const text = (raw ?? "").trim();
  if (text === "") return { id: null, error: "Pick a revision from the list." };
  if (!/^\d{1,10}$/.test(text)) return { id: null, error: `“${text.slice(0, 40)}” is not a revision of this record: pick one from the list.` };
  const found = revisions.find((r) => r.id === Number(text));
  if (!found) return { id: null, error: `The address asks for revision id ${text}, which is not in this record's history: pick one from the list.` };
  return { id: found.id };
}

/** Reads the two revisions asked for; a missing, unknown or repeated one gets a message for its field. */
export function pickRevisionPair(revisionsNewestFirst: RevisionRef[], query: { from?: string | null; to?: string | null }): RevisionPair {
  const from = pickOne(revisionsNewestFirst, query.from);
  const to = pickOne(revisionsNewestFirst, query.to);
  const errors: RevisionPair["errors"] = {};
  if (from.error) errors.from = from.error;
  if (to.error) errors.to = to.error;
  if (from.id !== null && from.id === to.id) {
    const seq = revisionsNewestFirst.find((r) => r.id === from.id)?.seq;
    errors.to = `Revision ${seq} is already the first pick: choose a different revision to show beside it.`;
  }
  return { from: from.id, to: to.id, errors };
}

export function pairIsShown(pair: RevisionPair): pair is RevisionPair & { from: number; to: number } {
  return pair.from !== null && pair.to !== null && !pair.errors.from && !pair.errors.to;
}
