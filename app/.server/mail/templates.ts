import type { OutgoingMail } from "./send";

type Block = { kind: "p"; text: string } | { kind: "code"; text: string } | { kind: "button"; label: string; url: string };

export function escapeHtml(s: string): string {
  return s.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;").replace(/'/g, "&#39;");
}

// One layout for every message: greeting, blocks, and the same footer in both parts.
export function layout(input: { to: string; subject: string; greeting: string; blocks: Block[]; publicUrl: string; reason: string }): OutgoingMail {
  const footerText = `Bandledger · ${input.publicUrl}\n${input.reason}\nIf this message was not meant for you, you can ignore it; nothing changes until the link or code is used.`;
  const text = [
    input.greeting,
    "",
    ...input.blocks.flatMap((b) => (b.kind === "p" ? [b.text, ""] : b.kind === "code" ? [`    ${b.text}`, ""] : [`${b.label}: ${b.url}`, ""])),
    "-- ",
    footerText,
    "",
  ].join("\n");
  const body = input.blocks
    .map((b) => {
      if (b.kind === "p") return `<p style="margin:0 0 14px">${escapeHtml(b.text)}</p>`;
      if (b.kind === "code") {
        return `<p style="margin:0 0 14px;font-family:'IBM Plex Mono',ui-monospace,monospace;font-size:28px;letter-spacing:6px;color:#1d242c">${escapeHtml(b.text)}</p>`;
      }
      return `<p style="margin:0 0 18px"><a href="${escapeHtml(b.url)}" style="display:inline-block;background:#a8481f;color:#ffffff;padding:8px 14px;border-radius:6px;text-decoration:none;font-weight:600">${escapeHtml(b.label)}</a></p>`;
    })
    .join("\n");
  const html = `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><title>${escapeHtml(input.subject)}</title></head>
<body style="margin:0;background:#f6f4ee;font-family:'IBM Plex Sans',Arial,sans-serif;color:#1d242c">
<div style="max-width:560px;margin:0 auto;padding:24px">
<div style="border-top:3px solid #a8481f;background:#ffffff;border-radius:6px;padding:20px 24px">
<p style="margin:0 0 16px;font-weight:600;font-size:17px">Bandledger</p>
<p style="margin:0 0 14px">${escapeHtml(input.greeting)}</p>
${body}
</div>
<p style="margin:14px 4px 0;font-size:12px;color:#5c6570">Bandledger · <a href="${escapeHtml(input.publicUrl)}" style="color:#1c6470">${escapeHtml(input.publicUrl)}</a><br>${escapeHtml(input.reason)}<br>If this message was not meant for you, you can ignore it; nothing changes until the link or code is used.</p>
</div>
</body></html>
`;
  return { to: input.to, subject: input.subject, text, html };
}

export function signInCodeMail(input: { to: string; name: string; code: string; link: string; minutes: number; publicUrl: string }): OutgoingMail {
  return layout({
    to: input.to,
    subject: `Your Bandledger sign-in code: ${input.code}`,
    greeting: `Hello ${input.name},`,
    blocks: [
      { kind: "p", text: "Type this code on the sign-in page:" },
      { kind: "code", text: input.code },
      { kind: "p", text: `It works for ${input.minutes} minutes, once, and only in the browser where you asked for it. After three wrong tries it is void.` },
      { kind: "button", label: "Sign in with this link", url: input.link },
    ],
    publicUrl: input.publicUrl,
    reason: "You receive this because someone asked to sign in to Bandledger with your address.",
  });
}

export function invitationMail(input: { to: string; name: string; inviterName: string; role: string; signInUrl: string; publicUrl: string }): OutgoingMail {
  return layout({
    to: input.to,
    subject: `${input.inviterName} invited you to Bandledger`,
    greeting: `Hello ${input.name},`,
    blocks: [
      { kind: "p", text: `${input.inviterName} gave you an account on Bandledger, the team's ledger of band parameters, with the ${input.role} role.` },
      { kind: "p", text: "There is no password: each time you sign in, Bandledger mails you a six-digit code and a sign-in link." },
      { kind: "button", label: "Sign in to Bandledger", url: input.signInUrl },
    ],
    publicUrl: input.publicUrl,
    reason: "You receive this because an admin of your team added your address to Bandledger.",
  });
}
