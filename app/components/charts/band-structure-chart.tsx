import { scaleLinear } from "d3-scale";
import { line } from "d3-shape";
import { ChartFrame, DEFAULT_MARGIN, HIGHLIGHT, MUTED, paddedExtent, seriesStroke } from "./chart-frame";

export interface BandStructureLabel {
  label: string;
  /** Distance along the path (units of 2π/a). */
  distance: number;
}

export interface BandStructureMark {
  /** Where the checked conduction energy sits, e.g. "Γ", "X", "L". */
  label: string;
  distance: number;
  energyEv: number;
  /** Put the label below and to the left of the ring, where another mark sits close to the right. */
  below?: boolean;
}

export interface BandStructureChartProps {
  labels: readonly BandStructureLabel[];
  distance: readonly number[];
  /** energiesEv[b][i]: band b + 1 at distance[i], from the valence maximum (0). */
  energiesEv: readonly (readonly number[])[];
  /** The filled bands, counted from the lowest; default 4. */
  valenceBands?: number;
  /** The fundamental gap, shaded from 0 to its conduction energy. */
  gap?: { gapEv: number; label: string };
  /** The conduction energies the check compared, marked on the curves. */
  marks?: readonly BandStructureMark[];
  width?: number;
  height?: number;
  title?: string;
}

const formatEnergy = (value: number) => String(Number(value.toPrecision(4))).replace("-", "−");

/**
 * Bands along a path through the Brillouin zone: the symmetry points as the x axis, valence and conduction bands
 * in two colours (and widths), the fundamental gap shaded above the valence maximum at zero, the checked
 * conduction energies ringed.
 */
export function BandStructureChart(props: BandStructureChartProps) {
  const { labels, distance, energiesEv, valenceBands = 4, gap, marks = [], width = 820, height = 440 } = props;
  const margin = { ...DEFAULT_MARGIN, right: 112 };
  const start = labels[0]?.distance ?? 0;
  const end = labels[labels.length - 1]?.distance ?? 1;
  const x = scaleLinear().domain([start, end]).range([margin.left, width - margin.right]);
  const y = scaleLinear()
    .domain(paddedExtent(energiesEv.flat(), 0.04))
    .nice()
    .range([height - margin.bottom, margin.top]);
  const path = (values: readonly number[]) =>
    line<number>()
      .defined((v) => Number.isFinite(v))
      .x((_, i) => x(distance[i]))
      .y((v) => y(v))(values) ?? "";
  const labelAt = new Map(labels.map((l) => [l.distance, l.label]));
  const description =
    `${energiesEv.length} bands along ${labels.map((l) => l.label).join("–")}, energies from the valence maximum at 0 eV` +
    (gap ? `; ${gap.label} shaded` : "") +
    (marks.length ? `; checked conduction energies: ${marks.map((m) => `${m.label} ${formatEnergy(m.energyEv)} eV`).join(", ")}` : "");
  const conduction = energiesEv.slice(valenceBands);
  const lastColumn = distance.length - 1;
  return (
    <ChartFrame
      width={width}
      height={height}
      title={props.title ?? "Band structure"}
      description={description}
      x={{ scale: x, label: "wavevector along the path", ticks: labels.map((l) => l.distance), format: (v) => labelAt.get(v) ?? "" }}
      y={{ scale: y, label: "energy from the valence maximum (eV)", format: formatEnergy }}
      labels={
        <g fontSize={11}>
          {gap && gap.gapEv > 0 ? (
            <text x={width - margin.right + 8} y={y(gap.gapEv)} dy="-0.3em" fill="currentColor">
              {gap.label}
            </text>
          ) : null}
          <text x={width - margin.right + 8} y={y(0)} dy="1.05em" fill={MUTED}>
            valence max. 0
          </text>
          {energiesEv[valenceBands - 1] && lastColumn >= 0 ? (
            <text x={width - margin.right + 8} y={y(Math.min(...energiesEv.slice(0, valenceBands).map((b) => b[lastColumn]))) } dy="0.32em" fill="var(--chart-series-1, currentColor)">
              valence
            </text>
          ) : null}
          {conduction.length && lastColumn >= 0 ? (
            <text x={width - margin.right + 8} y={y(Math.max(...conduction.map((b) => b[lastColumn])))} dy="0.32em" fill="var(--chart-series-2, currentColor)">
              conduction
            </text>
          ) : null}
        </g>
      }
    >
      {gap && gap.gapEv > 0 ? (
        <rect x={x(start)} width={x(end) - x(start)} y={y(gap.gapEv)} height={Math.max(0, y(0) - y(gap.gapEv))} fill={HIGHLIGHT} fillOpacity={0.2} data-gap />
      ) : null}
      {labels.map((l) => (
        <line key={`v${l.distance}`} x1={x(l.distance)} x2={x(l.distance)} y1={y.range()[0]} y2={y.range()[1]} stroke={MUTED} strokeOpacity={0.45} />
      ))}
      <line x1={x(start)} x2={x(end)} y1={y(0)} y2={y(0)} stroke={MUTED} strokeDasharray="4 3" />
      {energiesEv.map((values, b) => {
        const valence = b < valenceBands;
        const stroke = seriesStroke(valence ? 0 : 1);
        return <path key={`band${b}`} d={path(values)} fill="none" strokeWidth={valence ? 1.75 : 2.25} stroke={stroke.stroke} data-band={b + 1} />;
      })}
      {marks.map((m) => (
        <g key={`m${m.label}${m.distance}`}>
          <circle cx={x(m.distance)} cy={y(m.energyEv)} r={5} fill="none" stroke="currentColor" strokeWidth={1.5} />
          <text
            x={x(m.distance) + (m.below ? -7 : 7)}
            y={y(m.energyEv) + (m.below ? 16 : -7)}
            textAnchor={m.below ? "end" : "start"}
            fontSize={11}
            fill="currentColor"
          >
            {`${m.label} ${formatEnergy(m.energyEv)}`}
          </text>
        </g>
      ))}
    </ChartFrame>
  );
}
