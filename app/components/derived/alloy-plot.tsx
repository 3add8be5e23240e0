import { CompositionChart } from "~/components/charts";
import type { DerivedValuesData } from "~/domain/derived";

/** Eg(x) across the alloy at the chosen temperature, the Γ crossover and the lattice match marked. */
export function AlloyPlot({ plot, temperatureK, title }: { plot: NonNullable<DerivedValuesData["alloyPlot"]>; temperatureK: number; title: string }) {
  const match = plot.latticeMatch;
  return (
    // Markers in amber: the charts' default highlight is too pale for a dot or a dashed line, in either theme.
    <figure className="min-w-0 [--chart-highlight:var(--color-warn)]">
      <CompositionChart
        series={plot.series}
        compositionLabel={plot.compositionLabel}
        crossover={plot.crossover ?? undefined}
        latticeMatch={match && match.x !== null ? { x: match.x, label: match.label ?? undefined } : undefined}
        title={title}
        width={560}
        height={340}
      />
      <figcaption className="mt-1 text-xs text-muted">
        {title} at {temperatureK} K: end points by Varshni, then quadratic bowing.
        {plot.crossover ? ` ${plot.crossover.label}.` : " The Γ gap crosses no indirect gap in the ledger."}
        {match ? (match.x !== null ? ` Dashed: lattice-matched to ${match.substrateKey} (a = ${Number(match.substrateAngstrom).toFixed(5)} Å).` : ` ${match.note}`) : ""}
      </figcaption>
    </figure>
  );
}
