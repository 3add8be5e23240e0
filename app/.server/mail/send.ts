import nodemailer, { type Transporter } from "nodemailer";
import { env } from "../env";

export type OutgoingMail = { to: string; subject: string; text: string; html: string };

let transport: Transporter | undefined;

const LOOPBACK = new Set(["127.0.0.1", "localhost", "::1", "[::1]"]);

// The local sink speaks plain SMTP on loopback; any other server gets STARTTLS when it offers it.
export function transportOptions(smtpUrl: string) {
  const url = new URL(smtpUrl);
  const secure = url.protocol === "smtps:";
  const local = LOOPBACK.has(url.hostname);
  return {
    host: url.hostname.replace(/^\[|\]$/g, ""),
    port: url.port ? Number(url.port) : secure ? 465 : 587,
    secure,
    ignoreTLS: local && !secure,
    auth: url.username ? { user: decodeURIComponent(url.username), pass: decodeURIComponent(url.password) } : undefined,
    connectionTimeout: 10_000,
  };
}

function mailer(): Transporter {
  transport ??= nodemailer.createTransport(transportOptions(env().SMTP_URL));
  return transport;
}

// Every notice goes through here: one text part and one HTML part, from MAIL_FROM.
export async function sendMail(mail: OutgoingMail): Promise<{ messageId: string }> {
  const info = await mailer().sendMail({ from: env().MAIL_FROM, to: mail.to, subject: mail.subject, text: mail.text, html: mail.html });
  return { messageId: info.messageId };
}
