// The strategy stores short keys in its cookie; pages show these sentences instead of the library's.
export const SIGN_IN_MESSAGES = {
  "email-required": "Enter your e-mail address.",
  "email-invalid": "Enter an e-mail address such as name@example.com.",
  "code-format": "Enter the six digits from the e-mail.",
  "code-wrong": "That code does not match. Check the six digits in the newest e-mail and try again.",
  "code-expired": "That code has expired; codes last 10 minutes. Ask for a new one below.",
  "code-void": "That code is void after three wrong tries. Ask for a new one below.",
  "code-missing": "This browser has no code waiting. Ask for a code first.",
  "code-used": "That code has already signed someone in; each code works once. Ask for a new one below.",
  "code-duplicate": "This browser holds more than one sign-in code, so none of them is accepted. Ask for a new code below.",
  "code-too-many-tries": "Too many codes tried from this network in the last 15 minutes. Wait a few minutes and try again.",
  "link-other-browser": "This sign-in link works only in the browser where the code was requested. Type the six-digit code there, or ask for a new code here.",
} as const;

export type SignInMessageKey = keyof typeof SIGN_IN_MESSAGES;

export function signInMessage(key: string | undefined | null): string {
  if (key && key in SIGN_IN_MESSAGES) return SIGN_IN_MESSAGES[key as SignInMessageKey];
  return "Signing in did not work. Ask for a new code and try again.";
}

// Rounded up, so "try again at 14:32" is never a minute too early.
export function retryMinute(retryAt: Date): Date {
  return new Date(Math.ceil(retryAt.getTime() / 60_000) * 60_000);
}

export function tooManyCodesMessage(retryAt: Date): string {
  const hhmm = new Intl.DateTimeFormat("en-GB", { hour: "2-digit", minute: "2-digit", hour12: false, timeZone: "UTC" }).format(retryMinute(retryAt));
  return `Too many codes requested; try again at ${hhmm} UTC.`;
}
