import EChartsCoreModule from "echarts-for-react/lib/core";
import { BarChart, BoxplotChart, CustomChart, HeatmapChart, LineChart, ScatterChart } from "echarts/charts";
import { DataZoomComponent, GraphicComponent, GridComponent, LegendComponent, MarkAreaComponent, MarkLineComponent, TooltipComponent, VisualMapComponent } from "echarts/components";
import { CanvasRenderer } from "echarts/renderers";
import { CHART_THEME, echarts } from "@/lib/chart-theme";

// Only what the report charts draw: the bundle carries these and nothing more of the library.
echarts.use([
  BarChart,
  LineChart,
  ScatterChart,
  BoxplotChart,
  HeatmapChart,
  CustomChart,
  GridComponent,
  TooltipComponent,
  LegendComponent,
  MarkLineComponent,
  MarkAreaComponent,
  VisualMapComponent,
  DataZoomComponent,
  GraphicComponent,
  CanvasRenderer,
]);

// lib/core is CommonJS: the bundler may hand over the module object rather than its default export.
const ReactEChartsCore = ((EChartsCoreModule as unknown as { default?: typeof EChartsCoreModule }).default ?? EChartsCoreModule) as typeof EChartsCoreModule;

/** One report chart under the one theme; the container is labelled for screen readers and found by tests. */
export function ReportChart({ option, height = 360, testId, label }: { option: object; height?: number; testId: string; label: string }) {
  return (
    <div data-testid={testId} role="img" aria-label={label} className="w-full" style={{ height }}>
      <ReactEChartsCore echarts={echarts} theme={CHART_THEME} option={option} notMerge lazyUpdate style={{ height: "100%", width: "100%" }} />
    </div>
  );
}
