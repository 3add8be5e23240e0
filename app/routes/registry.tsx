import type { Route } from "./+types/registry";
import { db } from "~/.server/db/client";
import { requireUser } from "~/.server/permissions";
import { listRegistry, registryFilterOptions, registryTablePage } from "~/.server/registry/listing";
import { Pager } from "~/components/registry/pager";
import { RegistryFilters } from "~/components/registry/registry-filters";
import { RegistryTable } from "~/components/registry/registry-table";
import { parseRegistryView, registryViewSearch } from "~/domain/registry-schemas";

export const meta: Route.MetaFunction = () => [{ title: "Registry · Bandledger" }];

export async function loader({ request }: Route.LoaderArgs) {
  const view = parseRegistryView(new URL(request.url).searchParams);
  await requireUser(request);
  const [page, options] = await Promise.all([listRegistry(db(), view), registryFilterOptions(db(), { family: view.family })]);
  return { view: { ...view, page: page.page }, page: registryTablePage(page), options };
}

export default function Registry({ loaderData }: Route.ComponentProps) {
  const { view, page, options } = loaderData;
  const filtered = Boolean(view.family || view.material || view.quantity || view.method || view.q || view.status !== "active");
  return (
    <div className="space-y-4">
      <header>
        <p className="label">Registry</p>
        <h1 className="mt-1 text-2xl font-semibold tracking-tight">Approved band parameters</h1>
        <p className="mt-1 max-w-3xl text-sm text-muted">
          The current value of every record, with its unit, temperature and source. Open a value for its full history; the address of this page keeps the
          filters, sort and page, so it can be shared.
        </p>
      </header>
      <RegistryFilters view={view} options={options} />
      {page.total === 0 ? (
        <section className="card p-6 text-sm" aria-live="polite">
          <h2 className="font-semibold">{filtered ? "No record matches these filters" : "The registry is empty"}</h2>
          <p className="mt-1 text-muted">
            {filtered ? (
              <>
                Loosen a filter or <a href="/registry">clear them all</a>.
              </>
            ) : (
              "Approved proposals appear here as records with their sources."
            )}
          </p>
        </section>
      ) : (
        <>
          <RegistryTable page={page} view={view} />
          <Pager page={page.page} pageCount={page.pageCount} total={page.total} size={page.size} href={(p) => `/registry${registryViewSearch(view, { page: p })}`} />
        </>
      )}
    </div>
  );
}
