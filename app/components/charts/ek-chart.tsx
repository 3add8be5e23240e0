import { scaleLinear } from "d3-scale";
import { line } from "d3-shape";
import { ChartFrame, DEFAULT_MARGIN, DEFAULT_SIZE, HIGHLIGHT, MUTED, paddedExtent, seriesStroke } from "./chart-frame";

export interface EkChartGap {
  lowerEv: number;
  upperEv: number;
  /** Where the gap sits, in units of π/a (0 or ±1); the label is placed there. */
  kPiOverA: number;
  label?: string;
}

export interface EkChartProps {
  /** k in units of π/a, from −1 to 1. */
  kPiOverA: readonly number[];
  /** bandsEv[b][i]: band b at kPiOverA[i] (the shape nfeBands returns). */
  bandsEv: readonly (readonly number[])[];
  freeElectronEv?: readonly (readonly number[])[];
  gap?: EkChartGap;
  width?: number;
  height?: number;
  title?: string;
}

const K_TICKS = [-1, -0.5, 0, 0.5, 1];

/** E(k) of the nearly-free-electron check in the reduced zone, free-electron parabolas faint behind. */
export function EkChart(props: EkChartProps) {
  const { kPiOverA, bandsEv, freeElectronEv = [], gap, width = DEFAULT_SIZE.width, height = DEFAULT_SIZE.height } = props;
  const margin = DEFAULT_MARGIN;
  const x = scaleLinear().domain([-1, 1]).range([margin.left, width - margin.right]);
  const y = scaleLinear()
    .domain(paddedExtent(bandsEv.flat()))
    .range([height - margin.bottom, margin.top]);
  const path = (values: readonly number[]) =>
    line<number>()
      .defined((v) => Number.isFinite(v))
      .x((_, i) => x(kPiOverA[i]))
      .y((v) => y(v))(values) ?? "";
  const gapValue = gap ? gap.upperEv - gap.lowerEv : null;
  const gapLabel = gap ? (gap.label ?? `gap ${Number(gapValue!.toPrecision(4))} eV`) : null;
  const description =
    `${bandsEv.length} bands over k from −π/a to π/a` +
    (gap ? `; ${gapLabel} between ${gap.lowerEv.toPrecision(6)} and ${gap.upperEv.toPrecision(6)} eV` : "") +
    (freeElectronEv.length ? "; free-electron parabolas folded into the zone drawn faintly" : "");
  return (
    <ChartFrame
      width={width}
      height={height}
      title={props.title ?? "Band energies E(k) in the reduced zone"}
      description={description}
      x={{ scale: x, label: "wavevector k (π/a)", ticks: K_TICKS }}
      y={{ scale: y, label: "energy E (eV)" }}
      labels={
        gap && (
          <text
            x={x(Math.max(-1, Math.min(1, gap.kPiOverA))) + (gap.kPiOverA > 0 ? -6 : 6)}
            y={y((gap.lowerEv + gap.upperEv) / 2)}
            dy="0.32em"
            textAnchor={gap.kPiOverA > 0 ? "end" : "start"}
            fill="currentColor"
          >
            {gapLabel}
          </text>
        )
      }
    >
      {gap && (
        <rect
          x={x(-1)}
          width={x(1) - x(-1)}
          y={y(gap.upperEv)}
          height={Math.max(0, y(gap.lowerEv) - y(gap.upperEv))}
          fill={HIGHLIGHT}
          fillOpacity={0.12}
        />
      )}
      {freeElectronEv.map((values, b) => (
        <path key={`free${b}`} d={path(values)} fill="none" stroke={MUTED} strokeOpacity={0.35} strokeDasharray="3 3" />
      ))}
      {bandsEv.map((values, b) => (
        <path key={`band${b}`} d={path(values)} fill="none" strokeWidth={2} {...seriesStroke(0)} />
      ))}
    </ChartFrame>
  );
}
