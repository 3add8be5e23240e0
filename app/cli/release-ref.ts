import { UsageError } from "./command";

/** How a release is named on the command line, in usage texts and messages. */
export const RELEASE_REF_FORM = "<set>@<release>";
export const RELEASE_REF_EXAMPLE = "hemt-baseline@3";

export type ReleaseRef = { slug: string; number: number };

/** The one reader of a release reference (`hemt-baseline@3`), for every command that names a release. */
export function parseReleaseRef(text: string | undefined): ReleaseRef {
  const match = /^([a-z0-9]+(?:-[a-z0-9]+)*)@(\d{1,7})$/.exec(text ?? "");
  if (!match || Number(match[2]) < 1) throw new UsageError(`name the release as ${RELEASE_REF_FORM}, e.g. ${RELEASE_REF_EXAMPLE} (got "${text ?? ""}")`);
  return { slug: match[1], number: Number(match[2]) };
}

export function formatReleaseRef(ref: ReleaseRef): string {
  return `${ref.slug}@${ref.number}`;
}
