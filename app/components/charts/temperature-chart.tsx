import { scaleLinear } from "d3-scale";
import { line } from "d3-shape";
import {
  ChartFrame,
  DEFAULT_MARGIN,
  DEFAULT_SIZE,
  HIGHLIGHT,
  interpolate,
  paddedExtent,
  seriesStroke,
} from "./chart-frame";

export interface TemperatureSeries {
  /** e.g. "Γ", "X", "L". */
  label: string;
  points: readonly { temperatureK: number; valueEv: number }[];
}

export interface TemperatureChartProps {
  series: readonly TemperatureSeries[];
  /** Shaded: the temperatures the Varshni parameters were fitted over. */
  fittedRangeK?: { minK: number; maxK: number };
  /** A vertical marker at a chosen temperature, with each curve's value there. */
  markerK?: number;
  width?: number;
  height?: number;
  title?: string;
}

/** Eg(T) curves, one per valley, with the fitted range shaded and a marker at a chosen T. */
export function TemperatureChart(props: TemperatureChartProps) {
  const { series, fittedRangeK, markerK, width = DEFAULT_SIZE.width, height = DEFAULT_SIZE.height } = props;
  const margin = DEFAULT_MARGIN;
  const temperatures = series.flatMap((s) => s.points.map((p) => p.temperatureK));
  const x = scaleLinear()
    .domain([Math.min(0, ...temperatures), Math.max(1, ...temperatures)])
    .range([margin.left, width - margin.right]);
  const y = scaleLinear()
    .domain(paddedExtent(series.flatMap((s) => s.points.map((p) => p.valueEv))))
    .nice()
    .range([height - margin.bottom, margin.top]);
  const toPath = line<{ temperatureK: number; valueEv: number }>()
    .x((p) => x(p.temperatureK))
    .y((p) => y(p.valueEv));
  const markerValues =
    markerK === undefined
      ? []
      : series.map((s) => ({
          label: s.label,
          valueEv: interpolate(s.points.map((p) => [p.temperatureK, p.valueEv] as const), markerK),
        }));
  const description =
    `Band gap against temperature for ${series.map((s) => s.label).join(", ")}` +
    (fittedRangeK ? `; fitted range ${fittedRangeK.minK}–${fittedRangeK.maxK} K shaded` : "") +
    (markerK === undefined
      ? ""
      : `; at ${markerK} K: ${markerValues
          .map((m) => `${m.label} ${m.valueEv === null ? "n/a" : `${m.valueEv.toPrecision(6)} eV`}`)
          .join(", ")}`);
  return (
    <ChartFrame
      width={width}
      height={height}
      title={props.title ?? "Band gap against temperature"}
      description={description}
      x={{ scale: x, label: "temperature T (K)" }}
      y={{ scale: y, label: "band gap Eg (eV)" }}
      labels={
        <>
          {series.map((s) => {
            const last = s.points[s.points.length - 1];
            return last ? (
              <text key={s.label} x={x(last.temperatureK) + 6} y={y(last.valueEv)} dy="0.32em" fill="currentColor">
                {s.label}
              </text>
            ) : null;
          })}
          {markerK !== undefined && (
            <text x={x(markerK)} y={margin.top - 6} textAnchor="middle" fill="currentColor">
              {`${markerK} K`}
            </text>
          )}
        </>
      }
    >
      {fittedRangeK && (
        <rect
          x={x(fittedRangeK.minK)}
          width={Math.max(0, x(fittedRangeK.maxK) - x(fittedRangeK.minK))}
          y={margin.top}
          height={height - margin.bottom - margin.top}
          fill={HIGHLIGHT}
          fillOpacity={0.1}
        />
      )}
      {series.map((s, i) => (
        <path key={s.label} d={toPath([...s.points]) ?? ""} fill="none" strokeWidth={2} {...seriesStroke(i)} />
      ))}
      {markerK !== undefined && (
        <g>
          <line x1={x(markerK)} x2={x(markerK)} y1={margin.top} y2={height - margin.bottom} stroke={HIGHLIGHT} />
          {markerValues.map((m) =>
            m.valueEv === null ? null : (
              <circle key={m.label} cx={x(markerK)} cy={y(m.valueEv)} r={3.5} fill={HIGHLIGHT} />
            ),
          )}
        </g>
      )}
    </ChartFrame>
  );
}
