import { existsSync, readdirSync, readFileSync } from "node:fs";
import path from "node:path";
import { simpleParser, type ParsedMail } from "mailparser";

export type CaughtMail = { file: string; to: string[]; subject: string; text: string; html: string; parsed: ParsedMail };

export async function readMailbox(dir: string): Promise<CaughtMail[]> {
  if (!existsSync(dir)) return [];
  const files = readdirSync(dir).filter((f) => f.endsWith(".eml")).sort();
  const out: CaughtMail[] = [];
  for (const f of files) {
    const parsed = await simpleParser(readFileSync(path.join(dir, f)));
    const envelope = String(parsed.headers.get("x-sink-envelope-to") ?? "");
    out.push({
      file: f,
      to: envelope.split(",").map((s) => s.trim().toLowerCase()).filter(Boolean),
      subject: parsed.subject ?? "",
      text: parsed.text ?? "",
      html: typeof parsed.html === "string" ? parsed.html : "",
      parsed,
    });
  }
  return out;
}

// Waits for the newest message to an address (MIME-decoded by mailparser, never by hand).
export async function readLastMail(dir: string, to: string, options: { after?: number; timeoutMs?: number } = {}): Promise<CaughtMail> {
  const deadline = Date.now() + (options.timeoutMs ?? 10_000);
  for (;;) {
    const mails = (await readMailbox(dir)).filter((m) => m.to.includes(to.toLowerCase()));
    const fresh = options.after ? mails.filter((m) => Number(m.file.split("-")[0]) >= options.after!) : mails;
    if (fresh.length) return fresh[fresh.length - 1];
    if (Date.now() > deadline) throw new Error(`no message to ${to} arrived in the sink`);
    await new Promise((r) => setTimeout(r, 100));
  }
}
