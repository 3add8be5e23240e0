export { EkChart, type EkChartGap, type EkChartProps } from "./ek-chart";
export { TemperatureChart, type TemperatureChartProps, type TemperatureSeries } from "./temperature-chart";
export { CompositionChart, type CompositionChartProps, type CompositionSeries } from "./composition-chart";
export { BandStructureChart, type BandStructureChartProps, type BandStructureLabel, type BandStructureMark } from "./band-structure-chart";
