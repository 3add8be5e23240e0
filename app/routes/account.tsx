import { data, Form, useNavigation } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/account";
import { accountDetails, profileInput, updateProfile } from "~/.server/auth/account";
import { requireUser } from "~/.server/permissions";
import { redirectWithFlash } from "~/.server/session";
import { createApiToken, listApiTokens, revokeApiToken, tokenNameField } from "~/.server/tokens";
import { readForm } from "~/.server/storage";
import { FieldError, invalidProps } from "~/components/field-error";
import { usePreserveFormOnSignIn } from "~/components/preserve-form-on-sign-in";

export const meta: Route.MetaFunction = () => [{ title: "Your account · Bandledger" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const [details, tokens] = await Promise.all([accountDetails(user.id), listApiTokens(user.id)]);
  return {
    details: { ...details, lastSignInAt: details.lastSignInAt?.toISOString() ?? null },
    tokens: tokens.map((t) => ({
      id: t.id, name: t.name, prefix: t.prefix,
      createdAt: t.createdAt.toISOString(), lastUsedAt: t.lastUsedAt?.toISOString() ?? null, revokedAt: t.revokedAt?.toISOString() ?? null,
    })),
  };
}

type Errors = Partial<Record<"name" | "notifyMode" | "tokenName" | "token", string>>;
type ActionResult = { intent: string; errors: Errors; values: Record<string, string>; createdToken: { name: string; token: string } | null };

export async function action({ request }: Route.ActionArgs) {
  const user = await requireUser(request);
  const form = await readForm(request);
  const intent = String(form.get("intent") ?? "");
  const values = Object.fromEntries([...form.entries()].map(([k, v]) => [k, String(v)]));
  const fail = (errors: Errors) => data<ActionResult>({ intent, errors, values, createdToken: null }, { status: 400 });
  if (intent === "profile") {
    const parsed = profileInput.safeParse(values);
    if (!parsed.success) return fail(Object.fromEntries(parsed.error.issues.map((i) => [String(i.path[0]), i.message])));
    await updateProfile(user, parsed.data, request);
    return redirectWithFlash(request, "/account", { kind: "ok", message: "Your details are saved." });
  }
  if (intent === "create-token") {
    const name = tokenNameField.safeParse(values.tokenName ?? "");
    if (!name.success) return fail({ tokenName: name.error.issues[0].message });
    const created = await createApiToken(user, name.data, request);
    if (!created.ok) return fail({ tokenName: created.message });
    return data<ActionResult>({ intent, errors: {}, values: {}, createdToken: { name: name.data, token: created.token } });
  }
  if (intent === "revoke-token") {
    const id = z.coerce.number().int().positive().safeParse(values.tokenId);
    if (!id.success || !(await revokeApiToken(user, id.data, request))) return fail({ token: "That token is already revoked or is not yours." });
    return redirectWithFlash(request, "/account", { kind: "ok", message: "The token is revoked; requests with it are now refused." });
  }
  return fail({ token: "Unknown request." });
}

function when(iso: string | null) {
  return iso ? `${iso.slice(0, 10)} ${iso.slice(11, 16)} UTC` : "never";
}

export default function Account({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const { details, tokens } = loaderData;
  const profile = usePreserveFormOnSignIn("account-profile");
  const errors = actionData?.errors ?? {};
  const profileValues = actionData?.intent === "profile" ? actionData.values : null;
  const activeTokens = tokens.filter((t) => !t.revokedAt);
  return (
    <div className="mx-auto max-w-3xl space-y-8">
      <header>
        <p className="label">Your account</p>
        <h1 className="mt-1 text-2xl font-semibold tracking-tight">{details.name}</h1>
        <p className="mt-1 text-sm text-muted">
          {details.email} · {details.role} · last signed in {when(details.lastSignInAt)}
        </p>
      </header>

      <section className="card p-5" aria-labelledby="profile-title">
        <h2 id="profile-title" className="font-semibold">Name and notices</h2>
        {profile.restored ? (
          <p className="mt-2 text-sm text-warn" role="status">We kept what you typed before signing in; check it and save.</p>
        ) : null}
        <Form method="post" ref={profile.formRef} className="mt-4 space-y-4" noValidate>
          <input type="hidden" name="intent" value="profile" />
          <div>
            <label htmlFor="name" className="label">Name</label>
            <input id="name" name="name" defaultValue={profileValues?.name ?? details.name} className="field mt-1 max-w-md" autoComplete="name" {...invalidProps("name-error", errors.name)} />
            <FieldError id="name-error" message={errors.name} />
          </div>
          <fieldset>
            <legend className="label">E-mail notices about proposals and sets</legend>
            <div className="mt-2 space-y-1 text-sm">
              {([
                ["immediate", "One e-mail per event, when it happens"],
                ["digest", "One digest a day"],
              ] as const).map(([value, label]) => (
                <label key={value} className="flex items-center gap-2">
                  <input type="radio" name="notifyMode" value={value} defaultChecked={(profileValues?.notifyMode ?? details.notifyMode) === value} />
                  {label}
                </label>
              ))}
            </div>
            <FieldError id="notify-error" message={errors.notifyMode} />
          </fieldset>
          <button type="submit" className="btn-primary" disabled={navigation.state === "submitting"}>Save</button>
        </Form>
      </section>

      <section className="card p-5" aria-labelledby="tokens-title">
        <h2 id="tokens-title" className="font-semibold">Personal API tokens</h2>
        <p className="mt-1 text-sm text-muted">
          A token lets a script or simulation pipeline read Bandledger as you, with read access only. Send it as
          <code className="mx-1 font-mono text-xs">Authorization: Bearer blt_…</code>. Bandledger keeps only a hash: you see a token once, when you create it.
        </p>
        {actionData?.createdToken ? (
          <div className="mt-4 rounded-[var(--radius-card)] border border-pass p-3" role="status" data-testid="new-token">
            <p className="text-sm font-medium text-pass">New token “{actionData.createdToken.name}”. Copy it now; it will not be shown again.</p>
            <input readOnly value={actionData.createdToken.token} className="field mt-2 font-mono text-xs" aria-label="New token" onFocus={(e) => e.currentTarget.select()} />
          </div>
        ) : null}
        <Form key={tokens.length} method="post" className="mt-4 flex flex-wrap items-start gap-3" noValidate>
          <input type="hidden" name="intent" value="create-token" />
          <div className="min-w-64 flex-1">
            <label htmlFor="tokenName" className="label">Token name</label>
            <input id="tokenName" name="tokenName" placeholder="e.g. k·p pipeline on cluster A" defaultValue={actionData?.intent === "create-token" ? actionData.values.tokenName : ""} className="field mt-1" {...invalidProps("token-name-error", errors.tokenName)} />
            <FieldError id="token-name-error" message={errors.tokenName} />
          </div>
          <button type="submit" className="btn mt-5">Create read token</button>
        </Form>
        <FieldError id="token-error" message={errors.token} />
        {tokens.length === 0 ? (
          <p className="mt-4 text-sm text-muted">You have no tokens yet.</p>
        ) : (
          <table className="mt-4 w-full text-left text-sm">
            <thead className="text-xs text-muted uppercase">
              <tr><th className="py-1 pr-3">Name</th><th className="pr-3">Begins with</th><th className="pr-3">Created</th><th className="pr-3">Last used</th><th /></tr>
            </thead>
            <tbody>
              {tokens.map((t) => (
                <tr key={t.id} className="border-t border-rule">
                  <td className="py-1.5 pr-3">{t.name}</td>
                  <td className="pr-3 font-mono text-xs">{t.prefix}…</td>
                  <td className="pr-3 tabular-nums">{when(t.createdAt)}</td>
                  <td className="pr-3 tabular-nums">{when(t.lastUsedAt)}</td>
                  <td className="text-right">
                    {t.revokedAt ? (
                      <span className="text-xs text-muted">revoked {t.revokedAt.slice(0, 10)}</span>
                    ) : (
                      <Form method="post">
                        <input type="hidden" name="intent" value="revoke-token" />
                        <input type="hidden" name="tokenId" value={t.id} />
                        <button type="submit" className="btn text-xs" aria-label={`Revoke ${t.name}`}>Revoke</button>
                      </Form>
                    )}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
        {tokens.length > 0 && activeTokens.length === 0 ? <p className="mt-2 text-xs text-muted">All your tokens are revoked.</p> : null}
      </section>
    </div>
  );
}
