import { layout } from "../mail/templates";
import type { OutgoingMail } from "../mail/send";

/** What a notice says, kept in the notices table whether it is mailed at once or in the next digest. */
export type NoticeContent = { kind: string; subject: string; bodyText: string; link: string };

/** "GaAs · band gap (Γ, 300 K): 1.4225 eV → 1.4230 eV", the line every notice of a proposal starts from. */
export type ProposalSummary = { id: number; title: string; change: string };

const clip = (s: string, n: number) => (s.length > n ? `${s.slice(0, n - 1)}…` : s);

export function submittedNotice(p: ProposalSummary, authorName: string, link: string): NoticeContent {
  return {
    kind: "proposal.submitted",
    subject: clip(`${p.title}: a proposal waits for your decision`, 200),
    bodyText: `${authorName} proposes a change in a family you lead.\n${p.title}\n${p.change}\nIt needs a lead other than its author to approve or reject it.`,
    link,
  };
}

export function batchNotice(count: number, familyName: string, authorName: string, fileName: string, link: string): NoticeContent {
  return {
    kind: "proposal.batch",
    subject: clip(`${familyName}: ${count} proposal${count === 1 ? " waits" : "s wait"} for your decision (from ${fileName})`, 200),
    bodyText: `${authorName} uploaded ${fileName}: ${count} proposal${count === 1 ? "" : "s"} for materials of ${familyName}, a family you lead, wait for a decision.`,
    link,
  };
}

export function decisionNotice(p: ProposalSummary, decision: "approved" | "rejected", deciderName: string, reason: string | null, link: string): NoticeContent {
  const lines = [
    `${deciderName} ${decision} your proposal.`,
    p.title,
    p.change,
    reason ? `${decision === "rejected" ? "Reason" : "Note"}: ${reason}` : null,
    decision === "approved" ? "The new value is now the current one in the registry; the old one stays in the record's history." : null,
  ].filter((l): l is string => l !== null);
  return { kind: `proposal.${decision}`, subject: clip(`${p.title}: ${deciderName} ${decision} your proposal`, 200), bodyText: lines.join("\n"), link };
}

export function carryForwardNotice(p: ProposalSummary, authorName: string, from: string, to: string, link: string): NoticeContent {
  return {
    kind: "proposal.carried_forward",
    subject: clip(`${p.title}: carried forward onto the current value`, 200),
    bodyText: `${authorName} carried forward a proposal that waits for your decision: it now stands on the record's current value.\n${p.title}\nNow based on ${to} (it was based on ${from}).\n${p.change}\nLook at it again before you decide.`,
    link,
  };
}

export function remarkNotice(p: ProposalSummary, commenterName: string, body: string, link: string): NoticeContent {
  return {
    kind: "proposal.remark",
    subject: clip(`${commenterName} added a remark on ${p.title}`, 200),
    bodyText: `${commenterName} added a remark on the proposal ${p.title}:\n“${clip(body, 1500)}”`,
    link,
  };
}

type Recipient = { email: string; name: string };

const DIGEST_REASON_WITH_SETS = "You receive this because you take part in a proposal or asked for release notices of a set on Bandledger. Choose immediate notices or a daily digest on your account page.";
const FOOTER_REASON = "You receive this because you take part in a proposal on Bandledger. Choose immediate notices or a daily digest on your account page.";

/** One notice as one message: its lines as paragraphs and a button to the proposal. */
export function noticeMail(to: Recipient, notice: Pick<NoticeContent, "subject" | "bodyText" | "link">, publicUrl: string): OutgoingMail {
  return layout({
    to: to.email,
    subject: notice.subject,
    greeting: `Hello ${to.name},`,
    blocks: [
      ...notice.bodyText.split("\n").map((text) => ({ kind: "p" as const, text })),
      { kind: "button", label: "Open the proposal", url: notice.link },
    ],
    publicUrl,
    reason: FOOTER_REASON,
  });
}

// What a digest's notices are about, from their kinds: proposals (proposal.*), sets (set.*, release notices), or both.
function digestTopic(notices: Pick<NoticeContent, "kind">[]): string {
  const sets = notices.filter((n) => n.kind.startsWith("set.")).length;
  return sets === 0 ? "proposals" : sets === notices.length ? "sets" : "proposals and sets";
}

/** The daily digest: every waiting notice of one person, oldest first, each with its link. */
export function digestMail(to: Recipient, notices: Pick<NoticeContent, "kind" | "subject" | "bodyText" | "link">[], publicUrl: string): OutgoingMail {
  const topic = digestTopic(notices);
  return layout({
    to: to.email,
    subject: `Bandledger digest: ${notices.length} notice${notices.length === 1 ? "" : "s"} about ${topic}`,
    greeting: `Hello ${to.name},`,
    blocks: [
      { kind: "p", text: `Since your last digest: ${notices.length} notice${notices.length === 1 ? "" : "s"}.` },
      ...notices.flatMap((n) => [
        { kind: "p" as const, text: n.subject },
        ...n.bodyText.split("\n").map((text) => ({ kind: "p" as const, text })),
        { kind: "button" as const, label: "Open", url: n.link },
      ]),
    ],
    publicUrl,
    reason: topic === "proposals" ? FOOTER_REASON : DIGEST_REASON_WITH_SETS,
  });
}
