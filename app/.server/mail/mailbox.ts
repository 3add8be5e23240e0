import { existsSync, readdirSync, readFileSync, statSync } from "node:fs";
import path from "node:path";
import { simpleParser } from "mailparser";
import { data } from "react-router";
import { peerAddress } from "../auth/client-address";
import { env } from "../env";

// The machine's own browser connects from exactly these; 127.0.0.2 and the rest of 127/8 count as elsewhere.
const THIS_MACHINE = new Set(["127.0.0.1", "::1", "::ffff:127.0.0.1"]);

/**
 * The guard of the mailbox pages: absent (404) while the mailbox is off, and 403 to any socket that is not this
 * machine's own, whatever X-Forwarded-For or TRUST_PROXY say, since every sign-in code of the team is in it.
 */
export function requireLocalMailbox(): { dir: string } {
  if (!env().mailboxEnabled) throw data({ message: "Not found" }, { status: 404 });
  const peer = peerAddress();
  if (!peer || !THIS_MACHINE.has(peer)) {
    throw data({ message: "The local mailbox opens only in a browser on the machine that runs Bandledger (127.0.0.1 or ::1): it holds every sign-in code." }, { status: 403, statusText: "Forbidden" });
  }
  return { dir: env().mailboxDir };
}

export type MailboxEntry = { file: string; receivedAt: Date; to: string; from: string; subject: string };
export type MailboxMessage = MailboxEntry & { text: string; html: string | null };

const FILE = /^[0-9A-Za-z_-]+\.eml$/;

export function isMailboxFile(name: string): boolean {
  return FILE.test(name);
}

async function parse(dir: string, file: string): Promise<MailboxMessage> {
  const parsed = await simpleParser(readFileSync(path.join(dir, file)));
  const envelopeTo = String(parsed.headers.get("x-sink-envelope-to") ?? "");
  return {
    file,
    receivedAt: parsed.date ?? statSync(path.join(dir, file)).mtime,
    to: envelopeTo || (Array.isArray(parsed.to) ? parsed.to.map((a) => a.text).join(", ") : (parsed.to?.text ?? "")),
    from: parsed.from?.text ?? "",
    subject: parsed.subject ?? "(no subject)",
    text: parsed.text ?? "",
    html: typeof parsed.html === "string" ? parsed.html : null,
  };
}

// Newest first; the sink names files by arrival time.
export async function listMailbox(dir: string, limit = 100): Promise<MailboxEntry[]> {
  if (!existsSync(dir)) return [];
  const files = readdirSync(dir).filter(isMailboxFile).sort().reverse().slice(0, limit);
  const out: MailboxEntry[] = [];
  for (const f of files) {
    const { text: _text, html: _html, ...entry } = await parse(dir, f);
    out.push(entry);
  }
  return out;
}

export async function readMailboxMessage(dir: string, file: string): Promise<MailboxMessage | null> {
  if (!isMailboxFile(file) || !existsSync(path.join(dir, file))) return null;
  return parse(dir, file);
}
