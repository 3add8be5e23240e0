import { scaleLinear } from "d3-scale";
import { line } from "d3-shape";
import { ChartFrame, DEFAULT_MARGIN, DEFAULT_SIZE, HIGHLIGHT, paddedExtent, seriesStroke } from "./chart-frame";

export interface CompositionSeries {
  /** e.g. "Γ", "X", "L". */
  label: string;
  points: readonly { x: number; valueEv: number }[];
}

export interface CompositionChartProps {
  series: readonly CompositionSeries[];
  /** Axis label for x, e.g. "Al fraction x in Al(x)Ga(1−x)As". */
  compositionLabel?: string;
  /** Where the direct gap crosses an indirect one. */
  crossover?: { x: number; valueEv: number; label?: string };
  /** The composition lattice-matched to a substrate. */
  latticeMatch?: { x: number; label?: string };
  width?: number;
  height?: number;
  title?: string;
}

/** Eg(x) across an alloy for each valley, with the crossover and an optional lattice-match marker. */
export function CompositionChart(props: CompositionChartProps) {
  const { series, crossover, latticeMatch, width = DEFAULT_SIZE.width, height = DEFAULT_SIZE.height } = props;
  const margin = DEFAULT_MARGIN;
  const x = scaleLinear().domain([0, 1]).range([margin.left, width - margin.right]);
  const y = scaleLinear()
    .domain(paddedExtent(series.flatMap((s) => s.points.map((p) => p.valueEv))))
    .nice()
    .range([height - margin.bottom, margin.top]);
  const toPath = line<{ x: number; valueEv: number }>()
    .x((p) => x(p.x))
    .y((p) => y(p.valueEv));
  const crossoverLabel = crossover && (crossover.label ?? `crossover x = ${Number(crossover.x.toPrecision(4))}`);
  const matchLabel = latticeMatch && (latticeMatch.label ?? `lattice match x = ${Number(latticeMatch.x.toPrecision(4))}`);
  const description =
    `Band gap against composition for ${series.map((s) => s.label).join(", ")}` +
    (crossover ? `; ${crossoverLabel} at ${crossover.valueEv.toPrecision(6)} eV` : "") +
    (latticeMatch ? `; ${matchLabel}` : "");
  return (
    <ChartFrame
      width={width}
      height={height}
      title={props.title ?? "Band gap against composition"}
      description={description}
      x={{ scale: x, label: props.compositionLabel ?? "composition x (fraction of A)" }}
      y={{ scale: y, label: "band gap Eg (eV)" }}
      labels={
        <>
          {series.map((s) => {
            const last = s.points[s.points.length - 1];
            return last ? (
              <text key={s.label} x={x(last.x) + 6} y={y(last.valueEv)} dy="0.32em" fill="currentColor">
                {s.label}
              </text>
            ) : null;
          })}
          {crossover && (
            <text x={x(crossover.x)} y={y(crossover.valueEv) - 10} textAnchor="middle" fill="currentColor">
              {crossoverLabel}
            </text>
          )}
          {latticeMatch && (
            <text x={x(latticeMatch.x)} y={margin.top - 6} textAnchor="middle" fill="currentColor">
              {matchLabel}
            </text>
          )}
        </>
      }
    >
      {series.map((s, i) => (
        <path key={s.label} d={toPath([...s.points]) ?? ""} fill="none" strokeWidth={2} {...seriesStroke(i)} />
      ))}
      {latticeMatch && (
        <line
          x1={x(latticeMatch.x)}
          x2={x(latticeMatch.x)}
          y1={margin.top}
          y2={height - margin.bottom}
          stroke={HIGHLIGHT}
          strokeDasharray="4 3"
        />
      )}
      {crossover && <circle cx={x(crossover.x)} cy={y(crossover.valueEv)} r={4} fill={HIGHLIGHT} />}
    </ChartFrame>
  );
}
