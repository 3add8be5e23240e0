import type { Route } from "./+types/home";
import { getOptionalUser } from "~/.server/permissions";

export const meta: Route.MetaFunction = () => [{ title: "Bandledger — band parameters with provenance" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await getOptionalUser(request);
  return { signedIn: Boolean(user), name: user?.name ?? null };
}

export default function Home({ loaderData }: Route.ComponentProps) {
  return (
    <div className="grid gap-8 lg:grid-cols-[2fr_1fr]">
      <section>
        <p className="label">Band parameters, with their provenance</p>
        <h1 className="mt-2 text-3xl font-semibold tracking-tight">
          {loaderData.signedIn ? `Welcome back, ${loaderData.name}` : "One ledger of band parameters for the whole device team"}
        </h1>
        <p className="mt-4 max-w-2xl text-muted">
          Gaps at Γ, X and L with their temperature dependence, effective masses, Luttinger parameters, lattice constants,
          spin-orbit splitting and bowing parameters: each value kept with its source, its temperature and its history,
          checked against the physics that ties it to the others, and frozen into checksummed sets for your simulations.
        </p>
        <div className="mt-6 flex flex-wrap gap-3">
          {loaderData.signedIn ? (
            <>
              <a className="btn-primary no-underline" href="/registry">Open the registry</a>
              <a className="btn no-underline" href="/sets">Parameter sets</a>
            </>
          ) : (
            <a className="btn-primary no-underline" href="/sign-in">Sign in with your e-mail</a>
          )}
        </div>
      </section>
      <aside className="card p-4 text-sm">
        <h2 className="font-semibold">How a value gets here</h2>
        <ol className="mt-2 list-decimal space-y-1 pl-5 text-muted">
          <li>A contributor proposes it with a citation.</li>
          <li>Bandledger runs the consistency checks.</li>
          <li>A lead of the material family approves it.</li>
          <li>Sets pin it; pipelines download it by hash.</li>
        </ol>
        <p className="figure mt-4 font-mono text-xs text-muted">Eg(Γ, 300 K) GaAs = 1.4225 eV</p>
      </aside>
    </div>
  );
}
