import { useMemo } from "react";
import { EkChart } from "~/components/charts";
import { nfeBands, zoneKPoints } from "~/domain/physics";

export interface NfePlotInput {
  periodAngstrom: number;
  coefficients: readonly { n: number; energyEv: number }[];
  massM0: number;
  gap: { lowerEv: number; upperEv: number; kPiOverA: 0 | 1 };
  /** The bands drawn are those up to the one above the gap. */
  gapIndex: number;
}

/** E(k) in the reduced zone for a check's potential, the checked gap marked, free-electron parabolas behind. */
export function NfePlot({ input, width = 560, height = 340, kPoints = 121 }: { input: NfePlotInput; width?: number; height?: number; kPoints?: number }) {
  const key = JSON.stringify([input.periodAngstrom, input.coefficients, input.massM0, input.gapIndex, kPoints]);
  const bands = useMemo(
    () =>
      nfeBands(
        { periodAngstrom: input.periodAngstrom, coefficients: input.coefficients, massM0: input.massM0 },
        zoneKPoints(kPoints),
        { bandCount: Math.max(2, input.gapIndex + 1) },
      ),
    // The key holds every input; the arrays themselves are new on each render.
    [key],
  );
  // The checked gap is shaded in teal: the charts' default highlight is too pale for a band a few meV wide.
  return (
    <div className="[--chart-highlight:var(--color-teal)]">
      <EkChart
        kPiOverA={bands.kPiOverA}
        bandsEv={bands.bandsEv}
        freeElectronEv={bands.freeElectronEv}
        gap={{ lowerEv: input.gap.lowerEv, upperEv: input.gap.upperEv, kPiOverA: input.gap.kPiOverA }}
        width={width}
        height={height}
        title={`E(k) in the reduced zone, a = ${input.periodAngstrom} Å`}
      />
    </div>
  );
}
