import { createHash } from "node:crypto";
import { redirect } from "react-router";
import { Authenticator } from "remix-auth";
import type { SendTOTPOptions, TOTPVerifyParams } from "remix-auth-totp";
import { audit } from "../audit";
import { env } from "../env";
import { sendMail } from "../mail/send";
import { signInCodeMail } from "../mail/templates";
import { commitSession, getSession } from "../session";
import { markCodeUsed } from "./codes";
import { safeReturnTo } from "./return-to";
import { codeDigest, readTotpCookie } from "./totp-cookie";
import { CODE_PERIOD_SECONDS, createTotpStrategy, SIGN_IN_PATHS } from "./totp-strategy";
import { findActiveUserByEmail, markSignedIn } from "./users";

// The code record is encrypted with a key of its own, derived from the session secret.
function totpSecret(): string {
  return createHash("sha256").update("bandledger sign-in codes\0").update(env().sessionSecret).digest("hex");
}

function publicLink(link: string): string {
  const u = new URL(link);
  return new URL(u.pathname + u.search, env().BANDLEDGER_PUBLIC_URL).toString();
}

// Same work for every address: look it up, write the audit row; mail leaves in the background, so a
// known address answers no slower than an unknown one.
async function sendCode({ email, code, magicLink, request }: SendTOTPOptions): Promise<void> {
  const user = await findActiveUserByEmail(email);
  await audit(user ? { id: user.id, email: user.email } : { id: null, email }, "auth.code_requested", user ? { type: "user", id: user.id } : null, request, { known: Boolean(user) });
  if (!user) return;
  const mail = signInCodeMail({ to: user.email, name: user.name, code, link: publicLink(magicLink), minutes: CODE_PERIOD_SECONDS / 60, publicUrl: env().BANDLEDGER_PUBLIC_URL });
  void sendMail(mail).catch(async (error: unknown) => {
    console.error(`bandledger: sign-in code to ${user.email} not sent: ${(error as Error).message}`);
    await audit(null, "mail.failed", { type: "user", id: user.id }, null, { subject: mail.subject, error: (error as Error).message }).catch(() => undefined);
  });
}

async function verify({ email, request }: TOTPVerifyParams): Promise<never> {
  const session = await getSession(request);
  const pending = session.get("pendingSignIn");
  if (!pending || pending.email !== email.toLowerCase()) throw new Error("code-missing");
  // The strategy was handed one _totp cookie; it must be the code this session asked for, and it works once.
  const jwe = readTotpCookie(request.headers.get("cookie"))?.jwe;
  if (!jwe || codeDigest(jwe) !== pending.codeDigest) throw new Error("code-missing");
  if (!(await markCodeUsed(pending.codeDigest, pending.email))) throw new Error("code-used");
  const user = await findActiveUserByEmail(email);
  if (!user) throw new Error("code-wrong");
  await markSignedIn(user.id);
  const to = safeReturnTo(session.get("returnTo"));
  session.unset("pendingSignIn");
  session.unset("returnTo");
  session.set("userId", user.id);
  session.set("signedInAt", Date.now());
  session.flash("flash", { kind: "ok", message: `Signed in as ${user.name}.` });
  await audit({ id: user.id, email: user.email }, "auth.sign_in", { type: "user", id: user.id }, request, {
    via: new URL(request.url).pathname === SIGN_IN_PATHS.magicLink ? "link" : "code",
  });
  throw redirect(to, { headers: { "Set-Cookie": await commitSession(session) } });
}

let instance: Authenticator<never> | undefined;

export function authenticator(): Authenticator<never> {
  if (!instance) {
    instance = new Authenticator<never>();
    instance.use(
      createTotpStrategy<never>({
        secret: totpSecret(),
        secureCookie: env().BANDLEDGER_PUBLIC_URL.startsWith("https://"),
        sendCode,
        verify,
      }),
      "totp",
    );
  }
  return instance;
}
