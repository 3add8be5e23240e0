import { TemperatureChart } from "~/components/charts";
import type { DerivedValuesData } from "~/domain/derived";

/** Eg(T) at Γ, X and L (bowed at the chosen x for an alloy), the chosen temperature marked. */
export function TemperaturePlot({ plot, title }: { plot: NonNullable<DerivedValuesData["temperaturePlot"]>; title: string }) {
  return (
    <figure className="min-w-0 [--chart-highlight:var(--color-warn)]">
      <TemperatureChart
        series={plot.series}
        fittedRangeK={plot.fittedRangeK ?? undefined}
        markerK={plot.markerK}
        title={title}
        width={560}
        height={340}
      />
      <figcaption className="mt-1 text-xs text-muted">
        {title}. Varshni curves from the current 0 K fits{plot.fittedRangeK ? `; shaded: the Γ fit range ${plot.fittedRangeK.minK}–${plot.fittedRangeK.maxK} K` : ""}.
      </figcaption>
    </figure>
  );
}
