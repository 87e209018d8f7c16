import { useEffect, useState } from "react";
import EChartsCoreModule from "echarts-for-react/lib/core";
import { BarChart, BoxplotChart, CustomChart, HeatmapChart, LineChart, ScatterChart } from "echarts/charts";
import {
  DataZoomComponent,
  GraphicComponent,
  GridComponent,
  LegendComponent,
  MarkAreaComponent,
  MarkLineComponent,
  TooltipComponent,
  VisualMapComponent,
} from "echarts/components";
import { LabelLayout } from "echarts/features";
import { CanvasRenderer } from "echarts/renderers";
import { chartDrawn } from "@/components/ui/first-view";
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
  // The charts' labelLayout (hideOverlap: the p-chart's "above UCL" and rule labels) works only with this feature.
  LabelLayout,
  CanvasRenderer,
]);

// lib/core is CommonJS: the bundler may hand over the module object rather than its default export.
const ReactEChartsCore = ((EChartsCoreModule as unknown as { default?: typeof EChartsCoreModule }).default ?? EChartsCoreModule) as typeof EChartsCoreModule;

/**
 * The charts of a screen are drawn one after another, not all in one frame: ECharts draws a chart in
 * the animation frame after its option is set, and four charts set at once made one long frame
 * (≈ 0.25 s on a plant tablet) before the first of them showed. Each chart takes its turn once the one
 * before it has been drawn (two frames later) or has left the screen; its box holds its place meanwhile.
 */
let lastTurn: Promise<void> = Promise.resolve();

function useTurnToDraw(): boolean {
  const [mine, setMine] = useState(false);
  useEffect(() => {
    let gone = false;
    let release!: () => void;
    const done = new Promise<void>((resolve) => (release = resolve));
    const before = lastTurn;
    lastTurn = before.then(() => done);
    void before.then(() => {
      if (gone) return release();
      setMine(true);
      requestAnimationFrame(() =>
        requestAnimationFrame(() => {
          // Drawn: the first chart of a page completes its first view (src/components/ui/first-view.tsx).
          if (!gone) chartDrawn();
          release();
        }),
      );
    });
    return () => {
      gone = true;
      release();
    };
  }, []);
  return mine;
}

/** One report chart under the one theme; the container is labelled for screen readers and found by tests. */
export function ReportChart({ option, height = 360, testId, label }: { option: object; height?: number; testId: string; label: string }) {
  const drawNow = useTurnToDraw();
  return (
    <div data-testid={testId} role="img" aria-label={label} className="w-full" style={{ height }}>
      {drawNow && <ReactEChartsCore echarts={echarts} theme={CHART_THEME} option={option} notMerge lazyUpdate style={{ height: "100%", width: "100%" }} />}
    </div>
  );
}
