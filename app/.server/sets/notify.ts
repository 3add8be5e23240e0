import { db } from "../db/client";
import { env } from "../env";
import { sendMail } from "../mail/send";
import { layout } from "../mail/templates";
import { queueNotices } from "../workflow/notices";
import { compareSet, comparisonLines, type Comparison } from "./compare";
import { requireRelease, requireSet, releaseNoticeRecipients } from "./queries";

export type FreezeSummary = { headline: string; lines: string[] };

/** "3 changed, 1 added, 0 removed against release 2", with one line per value. */
export function freezeSummary(number: number, itemCount: number, comparison: Comparison | null): FreezeSummary {
  if (!comparison) return { headline: `First release: ${itemCount} values pinned.`, lines: [] };
  const { added, removed, changed, unchanged } = comparison;
  return {
    headline: `Against release ${comparison.from.release}: ${changed.length} changed, ${added.length} added, ${removed.length} removed, ${unchanged} unchanged.`,
    lines: comparisonLines(comparison),
  };
}

/** Mails everyone active who gets release notices for the set but the person who froze it: the new release, its hash and what changed since the previous one. */
export async function sendReleaseNotices(slug: string, number: number, actorId: number): Promise<number> {
  const set = await requireSet(slug);
  const release = await requireRelease(set, number);
  const recipients = (await releaseNoticeRecipients(set.id)).filter((w) => w.id !== actorId);
  if (recipients.length === 0) return 0;
  const comparison = number > 1 ? await compareSet(slug, number - 1, number) : null;
  const summary = freezeSummary(number, release.itemCount, comparison);
  const publicUrl = env().BANDLEDGER_PUBLIC_URL.replace(/\/$/, "");
  const link = comparison ? `${publicUrl}/sets/${slug}/compare?from=${number - 1}&to=${number}` : `${publicUrl}/sets/${slug}/releases/${number}`;
  // Those who chose the daily digest get the same summary in it, through the proposals' notice queue.
  const digest = recipients.filter((w) => w.notifyMode === "digest");
  await queueNotices(db(), digest.map((w) => w.id), {
    kind: "set.frozen",
    subject: `${set.name}: release ${number} is frozen and ready to download`,
    bodyText: [`${release.frozenBy} froze release ${number} of ${set.name} (${release.itemCount} values).`, `SHA-256 of the release: ${release.sha256}`, summary.headline, ...summary.lines.slice(0, 50)].join("\n"),
    link,
  });
  for (const w of recipients.filter((x) => x.notifyMode !== "digest")) {
    const mail = layout({
      to: w.email,
      subject: `${set.name}: release ${number} is frozen and ready to download`,
      greeting: `Hello ${w.name},`,
      blocks: [
        { kind: "p", text: `${release.frozenBy} froze release ${number} of ${set.name} (${release.itemCount} values).` },
        { kind: "p", text: `SHA-256 of the release: ${release.sha256}` },
        { kind: "p", text: summary.headline },
        ...summary.lines.slice(0, 50).map((line) => ({ kind: "p" as const, text: line })),
        ...(summary.lines.length > 50 ? [{ kind: "p" as const, text: `… and ${summary.lines.length - 50} more on the comparison page.` }] : []),
        { kind: "button", label: comparison ? "See the comparison" : "See the release", url: link },
      ],
      publicUrl,
      reason: `You receive this because you asked for release notices of the parameter set ${set.name}; stop them on its page.`,
    });
    await sendMail(mail);
  }
  return recipients.length;
}
