export { AlloyPlot } from "./alloy-plot";
export { DerivedValues } from "./derived-values";
export { TemperaturePlot } from "./temperature-plot";
