import { useId, type ReactNode } from "react";
import type { ScaleLinear } from "d3-scale";

// Colours come from CSS custom properties, each falling back to currentColor so a chart reads in light and
// dark themes even where the stylesheet does not set them:
//   --chart-series-1 … --chart-series-4   curves (also told apart by dash pattern)
//   --chart-muted                         free-electron parabolas, grid
//   --chart-highlight                     gap band, fitted range, markers

export interface Margin {
  top: number;
  right: number;
  bottom: number;
  left: number;
}

export const DEFAULT_SIZE = { width: 640, height: 400 };
export const DEFAULT_MARGIN: Margin = { top: 20, right: 72, bottom: 52, left: 64 };

export interface AxisSpec {
  scale: ScaleLinear<number, number>;
  label: string;
  ticks?: readonly number[];
  format?: (value: number) => string;
}

const DASHES = ["", "7 4", "2 3", "9 3 2 3"];

export function seriesStroke(index: number): { stroke: string; strokeDasharray?: string } {
  const dash = DASHES[index % DASHES.length];
  return { stroke: `var(--chart-series-${(index % 4) + 1}, currentColor)`, ...(dash ? { strokeDasharray: dash } : {}) };
}

export const MUTED = "var(--chart-muted, currentColor)";
export const HIGHLIGHT = "var(--chart-highlight, currentColor)";

const formatTick = (value: number) => String(Number(value.toPrecision(6))).replace("-", "−");

/** An accessible SVG with a title, a description, a left and a bottom axis, and the plot clipped to its area. */
export function ChartFrame(props: {
  width: number;
  height: number;
  title: string;
  description: string;
  x: AxisSpec;
  y: AxisSpec;
  /** Drawn clipped to the plot area. */
  children: ReactNode;
  /** Drawn unclipped on top (labels that may sit in the margin). */
  labels?: ReactNode;
}) {
  const { width, height, title, description, x, y, children, labels } = props;
  const id = useId();
  const [x0, x1] = x.scale.range();
  const [y0, y1] = y.scale.range();
  const xTicks = x.ticks ?? x.scale.ticks(6);
  const yTicks = y.ticks ?? y.scale.ticks(6);
  const formatX = x.format ?? formatTick;
  const formatY = y.format ?? formatTick;
  return (
    <svg
      role="img"
      aria-labelledby={`${id}-title ${id}-desc`}
      width={width}
      height={height}
      viewBox={`0 0 ${width} ${height}`}
      style={{ maxWidth: "100%", height: "auto", color: "inherit" }}
      fontSize={12}
      fontFamily="inherit"
    >
      <title id={`${id}-title`}>{title}</title>
      <desc id={`${id}-desc`}>{description}</desc>
      <defs>
        <clipPath id={`${id}-plot`}>
          <rect x={x0} y={y1} width={x1 - x0} height={y0 - y1} />
        </clipPath>
      </defs>
      <g aria-hidden="true">
        {yTicks.map((t) => (
          <g key={`y${t}`} transform={`translate(0,${y.scale(t)})`}>
            <line x1={x0} x2={x1} stroke={MUTED} strokeOpacity={0.15} />
            <line x1={x0 - 5} x2={x0} stroke="currentColor" />
            <text x={x0 - 8} dy="0.32em" textAnchor="end" fill="currentColor">
              {formatY(t)}
            </text>
          </g>
        ))}
        {xTicks.map((t) => (
          <g key={`x${t}`} transform={`translate(${x.scale(t)},0)`}>
            <line y1={y0} y2={y0 + 5} stroke="currentColor" />
            <text y={y0 + 18} textAnchor="middle" fill="currentColor">
              {formatX(t)}
            </text>
          </g>
        ))}
        <line x1={x0} x2={x1} y1={y0} y2={y0} stroke="currentColor" />
        <line x1={x0} x2={x0} y1={y0} y2={y1} stroke="currentColor" />
      </g>
      <text x={(x0 + x1) / 2} y={height - 10} textAnchor="middle" fill="currentColor">
        {x.label}
      </text>
      <text
        transform={`translate(16,${(y0 + y1) / 2}) rotate(-90)`}
        textAnchor="middle"
        fill="currentColor"
      >
        {y.label}
      </text>
      <g clipPath={`url(#${id}-plot)`}>{children}</g>
      {labels}
    </svg>
  );
}

/** Lower and upper ends of the values, widened by a fraction so curves do not touch the frame. */
export function paddedExtent(values: Iterable<number>, fraction = 0.05): [number, number] {
  let low = Number.POSITIVE_INFINITY;
  let high = Number.NEGATIVE_INFINITY;
  for (const v of values) {
    if (!Number.isFinite(v)) continue;
    low = Math.min(low, v);
    high = Math.max(high, v);
  }
  if (low > high) return [0, 1];
  const pad = (high - low || Math.abs(high) || 1) * fraction;
  return [low - pad, high + pad];
}

/** Linear interpolation of y at x along points sorted by x; null outside them. */
export function interpolate(points: readonly (readonly [number, number])[], x: number): number | null {
  for (let i = 1; i < points.length; i++) {
    const [xa, ya] = points[i - 1];
    const [xb, yb] = points[i];
    if ((x >= xa && x <= xb) || (x <= xa && x >= xb)) return xa === xb ? ya : ya + ((yb - ya) * (x - xa)) / (xb - xa);
  }
  return null;
}
