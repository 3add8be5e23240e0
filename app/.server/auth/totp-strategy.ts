import { TOTPStrategy, type SendTOTP, type TOTPVerifyParams } from "remix-auth-totp";
import { z } from "zod";
import type { SignInMessageKey } from "./messages";

export const CODE_PERIOD_SECONDS = 600;
export const CODE_DIGITS = 6;
export const CODE_MAX_WRONG_TRIES = 3;

export const SIGN_IN_PATHS = { request: "/sign-in", code: "/sign-in/code", magicLink: "/auth/magic-link" } as const;

const errors: Record<string, SignInMessageKey> = {
  requiredEmail: "email-required",
  invalidEmail: "email-invalid",
  invalidTotp: "code-wrong",
  expiredTotp: "code-expired",
  rateLimitExceeded: "code-void",
  missingSessionEmail: "code-missing",
  missingSessionTotp: "code-missing",
};

export const emailField = z.string().trim().toLowerCase().pipe(z.email({ error: "email-invalid" }).max(254, { error: "email-invalid" }));

// The library's defaults differ (mixed letters, 60 s, a 5-minute cookie): period and cookie lifetime are set together.
export function createTotpStrategy<User>(options: {
  secret: string;
  secureCookie: boolean;
  sendCode: SendTOTP;
  verify: (params: TOTPVerifyParams) => Promise<User>;
}): TOTPStrategy<User> {
  return new TOTPStrategy<User>(
    {
      secret: options.secret,
      cookieOptions: { maxAge: CODE_PERIOD_SECONDS, httpOnly: true, sameSite: "Lax", path: "/", ...(options.secureCookie ? { secure: true as const } : {}) },
      totpGeneration: { charSet: "0123456789", digits: CODE_DIGITS, period: CODE_PERIOD_SECONDS, maxAttempts: CODE_MAX_WRONG_TRIES },
      magicLinkPath: SIGN_IN_PATHS.magicLink,
      customErrors: errors,
      sendTOTP: options.sendCode,
      validateEmail: async (email) => emailField.safeParse(email).success,
      emailSentRedirect: SIGN_IN_PATHS.code,
      successRedirect: "/",
      failureRedirect: SIGN_IN_PATHS.code,
    },
    options.verify,
  );
}

// Authenticator.authenticate always ends in a thrown redirect; hand it back as a value.
export async function redirectOf(run: () => Promise<unknown>): Promise<Response> {
  try {
    await run();
  } catch (e) {
    if (e instanceof Response) return e;
    throw e;
  }
  throw new Error("the sign-in strategy finished without a redirect");
}
