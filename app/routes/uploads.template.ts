import type { Route } from "./+types/uploads.template";
import { requireRole } from "~/.server/permissions";
import { proposalCsvTemplate } from "~/domain/csv-proposals";

// Two example rows with their [V01] source (Vurgaftman et al. 2001, values from memory): delete them before uploading.
const EXAMPLES: Record<string, string>[] = [
  {
    material: "GaAs", quantity: "lattice_a", temperature_k: "300", value: "0.565325", unit: "nm", method: "compilation", source: "10.1063/1.1368156",
    source_title: "Band parameters for III–V compound semiconductors and their alloys", source_year: "2001", locator: "GaAs parameter table", notes: "example row: typed in nm, kept as 5.65325 Å",
  },
  {
    material: "AlGaAs", quantity: "eg_bowing_c0", valley: "G", value: "-0.127", unit: "eV", method: "compilation", source: "10.1063/1.1368156",
    source_title: "Band parameters for III–V compound semiconductors and their alloys", source_year: "2001", locator: "AlGaAs bowing of the Γ gap", notes: "example row: a negative value is a number, not a formula",
  },
];

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "contributor");
  return new Response("\uFEFF" + proposalCsvTemplate(EXAMPLES), {
    headers: {
      "Content-Type": "text/csv; charset=utf-8",
      "Content-Disposition": 'attachment; filename="bandledger-proposals-template.csv"',
      "X-Content-Type-Options": "nosniff",
    },
  });
}
