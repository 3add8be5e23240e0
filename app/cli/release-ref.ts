import { UsageError } from "./command";

/** How a release is named on the command line, in usage texts and messages: two arguments. */
export const RELEASE_REF_FORM = "<set> <release>";
export const RELEASE_REF_EXAMPLE = "hemt-baseline 3";

export type ReleaseRef = { slug: string; number: number };

const SLUG = /^[a-z0-9]+(?:-[a-z0-9]+)*$/;
const NUMBER = /^\d{1,7}$/;
// The one-word form of earlier versions (`hemt-baseline@3`): refused with the new form, never guessed at.
const OLD_FORM = /^([a-z0-9]+(?:-[a-z0-9]+)*)@(\d{1,7})$/;

/**
 * The one reader of a release on the command line, for every command that names one: the set's short name and the
 * release number as two arguments (`hemt-baseline 3`). `positionals` are the command's positional arguments; a
 * command that takes none besides the release passes them all.
 */
export function parseReleaseRef(positionals: readonly string[], verb: string): ReleaseRef {
  const old = positionals.length === 1 ? OLD_FORM.exec(positionals[0]) : null;
  if (old) throw new UsageError(`name the release as two arguments, the set and the release number: "${old[1]} ${Number(old[2])}" (the form "${positionals[0]}" is no longer read)`);
  if (positionals.length === 0) throw new UsageError(`name the release to ${verb} as ${RELEASE_REF_FORM}, e.g. ${RELEASE_REF_EXAMPLE}`);
  const [slug, number, extra] = positionals;
  if (!SLUG.test(slug)) throw new UsageError(`the set's short name is lower-case letters, digits and single hyphens, e.g. hemt-baseline (got "${slug}")`);
  if (number === undefined) throw new UsageError(`name the release number after the set, e.g. ${slug} 3`);
  if (!NUMBER.test(number) || Number(number) < 1) throw new UsageError(`the release number is a whole number from 1, e.g. ${slug} 3 (got "${number}")`);
  if (extra !== undefined) throw new UsageError(`unexpected argument "${extra}"`);
  return { slug, number: Number(number) };
}

export function formatReleaseRef(ref: ReleaseRef): string {
  return `${ref.slug} ${ref.number}`;
}
